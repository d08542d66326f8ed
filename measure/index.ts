/**
 * Rimwatch computation core: pure functions, no I/O, no clock. Methods and sources in README.md.
 */
export * from './errors';
export * from './geometry';
export * from './size';
export * from './rhea-nomogram';
export * from './calibration';
export * from './calipers';
export * from './resorption';
export * from './settings';
export * from './deviations';
export * from './travel';
export * from './drains';
