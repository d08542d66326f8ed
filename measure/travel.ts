import { MeasureInputError, requireFinite, requireNonNegative, requirePositive } from './errors';

/** ICAO standard atmosphere, troposphere. Source: ICAO Doc 7488; ISO 2533; US Standard Atmosphere 1976. */
export const standardAtmosphere = {
  seaLevelPressureKPa: 101.325,
  seaLevelTemperatureK: 288.15,
  lapseRateKPerM: 0.0065,
  exponent: 5.25588,
  validFromMetres: -1000,
  validToMetres: 11000,
  source: 'ICAO Doc 7488 standard atmosphere (ISO 2533; US Standard Atmosphere 1976), troposphere',
} as const;

/** Saturated water vapour pressure at body temperature (37 C), kPa. Source: physiology tables (6.28 kPa, 47 mmHg). */
export const waterVapourAt37CKPa = 6.28;

/** Highest cabin pressure altitude of airliners, feet. Source: 14 CFR 25.841 (from memory). */
export const maxCabinAltitudeFeet = 8000;

/** Exact conversion, feet to metres (1 ft = 0.3048 m). Source: international yard and pound agreement, 1959. */
export function feetToMetres(feet: number): number {
  requireFinite('feet', feet);
  return feet * 0.3048;
}

/**
 * Pressure at a (cabin) pressure altitude in the ICAO standard atmosphere:
 * P = P0 (1 - L h / T0)^5.25588. Source: ICAO Doc 7488 / ISO 2533.
 */
export function cabinPressureKPa(altitudeMetres: number): number {
  requireFinite('altitudeMetres', altitudeMetres);
  const a = standardAtmosphere;
  if (altitudeMetres < a.validFromMetres || altitudeMetres > a.validToMetres) {
    throw new MeasureInputError(
      'altitudeMetres',
      'out-of-range',
      `The formula covers ${a.validFromMetres} to ${a.validToMetres} m (troposphere).`,
    );
  }
  return a.seaLevelPressureKPa * Math.pow(1 - (a.lapseRateKPerM * altitudeMetres) / a.seaLevelTemperatureK, a.exponent);
}

/**
 * Factor by which a trapped gas volume grows going from one pressure to another (Boyle's law),
 * optionally for gas saturated with water vapour at a fixed partial pressure (e.g. 6.28 kPa at 37 C).
 * Source: Boyle's law; (P1 - PH2O) / (P2 - PH2O).
 */
export function gasExpansionFactor(fromKPa: number, toKPa: number, options: { waterVapourKPa?: number } = {}): number {
  requirePositive('fromKPa', fromKPa);
  requirePositive('toKPa', toKPa);
  const w = requireNonNegative('waterVapourKPa', options.waterVapourKPa ?? 0);
  if (toKPa <= w || fromKPa <= w) {
    throw new MeasureInputError('waterVapourKPa', 'inconsistent', 'Water vapour pressure must be below both pressures.');
  }
  return (fromKPa - w) / (toKPa - w);
}

/** Defaults for the flying note, with sources. */
export const flyingDefaults = {
  daysAfterResolution: 7,
  daysAfterTraumatic: 14,
  source:
    'BTS air travel recommendations (Ahmedzai S et al., Thorax 2011;66 Suppl 1; Coker RK et al., Thorax 2022;77:329): fly no sooner than 7 days after a film confirms resolution, 14 days after a traumatic pneumothorax; a current pneumothorax is a contraindication',
} as const;

export interface FlyingSettings {
  daysAfterResolution?: number;
  daysAfterTraumatic?: number;
  traumatic?: boolean;
}

function parseIsoDate(field: string, value: string): number {
  const m = typeof value === 'string' ? /^(\d{4})-(\d{2})-(\d{2})$/.exec(value) : null;
  if (m === null) {
    throw new MeasureInputError(field, 'bad-format', `${field} must be a date written YYYY-MM-DD.`);
  }
  const y = Number(m[1]);
  const mo = Number(m[2]);
  const d = Number(m[3]);
  const ms = Date.UTC(y, mo - 1, d);
  const back = new Date(ms);
  if (y < 1000 || back.getUTCFullYear() !== y || back.getUTCMonth() !== mo - 1 || back.getUTCDate() !== d) {
    throw new MeasureInputError(field, 'bad-format', `${field} is not a real calendar date.`);
  }
  return ms;
}

function requireWholeDays(field: string, v: number): number {
  requireNonNegative(field, v);
  if (!Number.isInteger(v)) throw new MeasureInputError(field, 'out-of-range', `${field} must be a whole number of days.`);
  return v;
}

/**
 * Earliest date to fly after a film confirms complete resolution: + 7 days (spontaneous) or + 14
 * days (traumatic), as settings. Pure UTC date arithmetic on YYYY-MM-DD. Source: BTS air travel
 * recommendations, Thorax 2011;66 Suppl 1 and Thorax 2022;77:329.
 */
export function flyingClearanceDate(resolutionConfirmedOn: string, settings: FlyingSettings = {}): string {
  const start = parseIsoDate('resolutionConfirmedOn', resolutionConfirmedOn);
  const days = settings.traumatic
    ? requireWholeDays('daysAfterTraumatic', settings.daysAfterTraumatic ?? flyingDefaults.daysAfterTraumatic)
    : requireWholeDays('daysAfterResolution', settings.daysAfterResolution ?? flyingDefaults.daysAfterResolution);
  return new Date(start + days * 86_400_000).toISOString().slice(0, 10);
}
