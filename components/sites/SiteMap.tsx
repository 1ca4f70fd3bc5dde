import type { SiteMap as SiteMapGeometry } from '@/lib/sites/map';

/**
 * The sites as dots on a plain SVG (positions from `siteMap`, lib/sites/map.ts): no map tiles, nothing fetched.
 * Each dot links to its site's page; the scale bar holds at the network's centre latitude.
 */
export function SiteMap({ map }: { map: SiteMapGeometry }) {
  const { width, height, points, scale, unplaced } = map;
  return (
    <figure className="rounded-lg border border-rule bg-card p-3" data-testid="site-map">
      {points.length === 0 ? (
        <p className="py-6 text-center text-sm text-ink-soft">No site has a position yet. Give a site its latitude and longitude to place it here.</p>
      ) : (
        <svg viewBox={`0 0 ${width} ${height}`} role="img" aria-label={`Map of ${points.length} sites`} className="h-auto w-full max-w-3xl">
          <rect x={0.5} y={0.5} width={width - 1} height={height - 1} fill="var(--color-paper)" stroke="var(--color-rule)" />
          <g aria-hidden="true" fontSize={11} fill="var(--color-ink-soft)">
            <path d={`M ${width - 22} 34 L ${width - 16} 18 L ${width - 10} 34 Z`} fill="var(--color-ink-soft)" />
            <text x={width - 16} y={46} textAnchor="middle">
              N
            </text>
          </g>
          {points.map((point) => (
            <a key={point.slug} href={`/sites/${point.slug}`} aria-label={point.name}>
              <circle cx={point.x} cy={point.y} r={6} fill="var(--color-tide)" stroke="white" strokeWidth={1.5} />
              <text x={point.x + 9} y={point.y + 4} fontSize={12} fill="var(--color-ink)">
                {point.name}
              </text>
            </a>
          ))}
          {scale ? (
            <g aria-label={`Scale bar: ${scale.km} km`} fontSize={11} fill="var(--color-ink-soft)">
              <path d={`M 16 ${height - 18} v 5 h ${scale.px} v -5`} fill="none" stroke="var(--color-ink)" strokeWidth={1.5} />
              <text x={16 + scale.px / 2} y={height - 20} textAnchor="middle">
                {scale.km.toLocaleString('en-GB')} km
              </text>
            </g>
          ) : null}
        </svg>
      )}
      <figcaption className="mt-2 text-xs text-ink-soft">
        Positions in WGS 84 latitude and longitude, drawn to one scale about the network&apos;s centre (distances away from the centre latitude are
        approximate).{unplaced.length ? ` Without a position: ${unplaced.join(', ')}.` : ''}
      </figcaption>
    </figure>
  );
}
