/**
 * The standing caution, shown once on each page where indicators inform a decision (near the top, where they are
 * read); the page shell carries none, so it never appears twice.
 */
export function Caution({ compact = false }: { compact?: boolean }) {
  return (
    <p role="note" className={compact ? 'text-xs text-ink-soft' : 'text-sm text-ink-soft'}>
      <strong className="font-semibold text-ink">Caution:</strong> these indicators are statistical evidence of slowing down, not a forecast of a tipping point
      or of its timing. Decisions that affect public safety, water supply or ecosystems rest with the responsible authorities under local rules.
    </p>
  );
}
