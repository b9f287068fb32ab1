import { describe, expect, it } from 'vitest';
import { gasAttenuationP676 } from '../src/scene/p676.js';

describe('gas attenuation, ITU-R P.676-13 Annex 1 line by line', () => {
  // ITU-R SG3 validation examples (check-values.md, V): p = 1013.25 hPa, T = 288.15 K,
  // rho = 7.5 g/m^3; tolerance 1e-4 relative.
  const cases: [number, number, number | undefined][] = [
    [60e9, 14.62347, 0.15484],
    [61e9, 15.00716, undefined],
    [28e9, 0.018696, 0.08306],
  ];
  it.each(cases)('at %d Hz matches the SG3 validation values', (f, oxygen, water) => {
    const g = gasAttenuationP676(f);
    expect(Math.abs(g.oxygenDbPerKm / oxygen - 1)).toBeLessThan(1e-4);
    if (water !== undefined) expect(Math.abs(g.waterVapourDbPerKm / water - 1)).toBeLessThan(1e-4);
  });
  it('totals 14.77832 dB/km at 60 GHz and 0.101756 dB/km at 28 GHz (SG3 validation, V)', () => {
    expect(Math.abs(gasAttenuationP676(60e9).totalDbPerKm / 14.77832 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(gasAttenuationP676(28e9).totalDbPerKm / 0.101756 - 1)).toBeLessThan(1e-4);
  });
  it('differs from the Annex 2 approximation figure of about 15.00 dB/km at 60 GHz (P.676-10, V) by more than 0.2 dB/km', () => {
    expect(Math.abs(gasAttenuationP676(60e9).totalDbPerKm - 15.0)).toBeGreaterThan(0.2);
  });
  it('has no water-vapour part in dry air and refuses frequencies outside 1-1000 GHz', () => {
    expect(gasAttenuationP676(60e9, { waterVapourDensityGm3: 0 }).waterVapourDbPerKm).toBe(0);
    expect(() => gasAttenuationP676(0.5e9)).toThrow('gasAttenuationP676(): the line-by-line method covers 1-1000 GHz, got 0.5 GHz');
  });
});
