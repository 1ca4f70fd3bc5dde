import { SPARK_HEIGHT, SPARK_WIDTH } from '@/lib/display/sparkline';

/**
 * A tiny line of one indicator's rolling curve, drawn from the path `sparkPath` computed on the server; the
 * numbers beside it carry the meaning, this only shows shape.
 */
export function Sparkline({ path, label }: { path: string; label: string }) {
  return (
    <svg role="img" aria-label={label} width={SPARK_WIDTH} height={SPARK_HEIGHT} viewBox={`0 0 ${SPARK_WIDTH} ${SPARK_HEIGHT}`} className="block">
      <title>{label}</title>
      <path d={path} fill="none" className="stroke-tide" strokeWidth={1.5} strokeLinejoin="round" strokeLinecap="round" />
    </svg>
  );
}
