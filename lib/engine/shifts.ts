/** Options of the abrupt-shift detector (see CONTRACT; the real detector replaces this stub). */
export interface ShiftOptions {
  minSegment?: number;
  falsePositiveRate?: number;
}

/** Temporary stand-in until the change-point detector lands: finds no shifts. O(1). */
export function detectShifts(_x: Float64Array, _options?: ShiftOptions): { index: number; size: number }[] {
  return [];
}
