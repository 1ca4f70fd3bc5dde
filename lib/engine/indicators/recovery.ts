import { momentIndicator } from './definition';

/**
 * Recovery rate from the lag-1 autocorrelation of an AR(1)/Ornstein–Uhlenbeck process, ac1 = e^{−λΔt}:
 * λ = −ln(ac1)/Δt where ac1 > 0, NaN elsewhere. O(1). Falls as the system slows down.
 */
export const recovery = momentIndicator({
  name: 'recovery',
  direction: 'falling',
  formula: 'λ = −ln r(1)/Δt where r(1) > 0',
  cost: 'O(1) per window from sliding sums',
  source: 'Gillespie (1996), Phys. Rev. E 54, 2084 (ac1 = e^{−λΔt})',
  byDefault: true,
  trendOf: { name: 'ac1', sign: -1 },
  fromMoments: ({ m2, lag, dt }) => {
    if (!(m2 > 0)) return Number.NaN;
    const a = lag / m2;
    return a > 0 ? -Math.log(a) / dt : Number.NaN;
  },
});
