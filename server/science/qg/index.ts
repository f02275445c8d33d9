/** Quasi-geostrophic diagnosis: public surface of server/science/qg. */
export * from './errors.ts';
export * from './grid.ts';
export * from './differences.ts';
export * from './fields.ts';
export * from './forcing.ts';
export * from './operator.ts';
export * from './eigen.ts';
export * from './fft.ts';
export * from './solver.ts';
export * from './diagnose.ts';
