'use client';

import { useRef, useState, type ReactNode } from 'react';
import { savePng, saveSvg } from './export';
import { Button } from '@/components/ui/Button';

/** A titled chart with its legend text and SVG/PNG export buttons (hidden when printing). */
export function ChartFrame({
  title,
  fileName,
  legend,
  children,
  testId,
}: {
  title: string;
  fileName: string;
  legend?: ReactNode;
  children: ReactNode;
  testId?: string;
}) {
  const ref = useRef<HTMLDivElement>(null);
  const [error, setError] = useState<string | null>(null);
  async function save(kind: 'svg' | 'png') {
    if (!ref.current) return;
    setError(null);
    try {
      const ok = kind === 'svg' ? saveSvg(ref.current, title, fileName) : await savePng(ref.current, title, fileName);
      if (!ok) setError('Nothing to save yet.');
    } catch (e) {
      setError(e instanceof Error ? e.message : 'Saving failed.');
    }
  }
  return (
    <figure className="break-inside-avoid rounded-lg border border-rule bg-card p-3" data-testid={testId}>
      <figcaption className="mb-2 flex flex-wrap items-center gap-2">
        <span className="text-sm font-semibold">{title}</span>
        {legend ? <span className="text-xs text-ink-soft">{legend}</span> : null}
        <span className="no-print ml-auto flex gap-1">
          <Button size="sm" onClick={() => save('svg')} aria-label={`Save ${title} as SVG`}>
            SVG
          </Button>
          <Button size="sm" onClick={() => save('png')} aria-label={`Save ${title} as PNG`}>
            PNG
          </Button>
        </span>
      </figcaption>
      <div ref={ref}>{children}</div>
      {error ? (
        <p role="alert" className="mt-1 text-xs text-warning">
          {error}
        </p>
      ) : null}
    </figure>
  );
}
