/** The standing caution shown wherever indicators inform a decision. */
export function Caution({ compact = false }: { compact?: boolean }) {
  return (
    <p role="note" className={compact ? 'text-xs text-ink-soft' : 'text-sm text-ink-soft'}>
      <strong className="font-semibold text-ink">Caution:</strong> these indicators are statistical evidence of slowing
      down, not a forecast of a transition or of its timing. Decisions that affect public safety, water supply or
      ecosystems rest with the responsible authorities under local rules.
    </p>
  );
}
