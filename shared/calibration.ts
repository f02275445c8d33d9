/**
 * Calibration sets: every tunable of the column signals and the generation models
 * (SCIENCE.md section 7), with units and sources. A set is versioned; every computed number
 * records the version it was made with. Shared by the client (calibration editor) and the server.
 */
import { z } from 'zod';

const fraction = z.number().min(0).max(1);
const percent = z.number().min(0).max(100);

export const calibrationParametersSchema = z
  .object({
    precipCriticalRhPct: z.number().min(0).max(99),
    precipEfficiency: z.number().gt(0).max(1),
    rainSnowLevel: z.enum(['850hPa', 'lowest']),
    snowAllBelowC: z.number().min(-30).max(10),
    rainAllAboveC: z.number().min(-30).max(10),
    cloudCriticalRhPct: z.number().min(0).max(99),
    cloudRhcAscentDropPct: percent,
    cloudRhcDescentRisePct: percent,
    cloudOmegaScalePaPerS: z.number().gt(0).max(10),
    cloudLowMidBoundaryHpa: z.number().gt(100).lt(1100),
    cloudMidHighBoundaryHpa: z.number().gt(100).lt(1100),
    solarConstantWm2: z.number().min(1300).max(1400),
    cloudAttenuationA: fraction,
    cloudAttenuationB: z.number().gt(0).max(10),
    albedo: fraction,
    gammaPerK: z.number().min(-0.02).max(0),
    noctC: z.number().min(20).max(70),
    snowDdfMmPerDayK: z.number().min(0).max(20),
    meltThresholdC: z.number().min(-10).max(10),
  })
  .strict()
  .refine((p) => p.snowAllBelowC < p.rainAllAboveC, {
    message: 'snowAllBelowC must be below rainAllAboveC',
    path: ['snowAllBelowC'],
  })
  .refine((p) => p.cloudMidHighBoundaryHpa < p.cloudLowMidBoundaryHpa, {
    message: 'cloudMidHighBoundaryHpa must be a lower pressure than cloudLowMidBoundaryHpa',
    path: ['cloudMidHighBoundaryHpa'],
  });

export type CalibrationParameters = z.infer<typeof calibrationParametersSchema>;

export const calibrationSetSchema = z
  .object({
    version: z.number().int().min(1),
    name: z.string().min(1).max(200),
    note: z.string().max(4000).optional(),
    parameters: calibrationParametersSchema,
  })
  .strict();

export type CalibrationSet = z.infer<typeof calibrationSetSchema>;

export interface ParameterInfo {
  unit: string;
  description: string;
  source: string;
}

/** Units, meaning and source of every parameter; typed so that none can be left out. */
export const CALIBRATION_PARAMETER_INFO: Record<keyof CalibrationParameters, ParameterInfo> = {
  precipCriticalRhPct: {
    unit: '%',
    description: 'RH at which the condensation weight F(RH) of the precipitation integral starts to rise from 0 (reaches 1 at 100 %)',
    source: 'Liftwise default; common practice for grid-scale condensation thresholds, to be calibrated per region',
  },
  precipEfficiency: {
    unit: '1',
    description: 'precipitation efficiency E: share of the diagnosed condensation that reaches the ground',
    source: 'Liftwise default, uncalibrated; calibrate per region against model precipitation (SCIENCE.md section 3)',
  },
  rainSnowLevel: {
    unit: '-',
    description: 'temperature used by the rain/snow ramp: the 850 hPa level, or the lowest level of the grid',
    source: 'common forecasting practice',
  },
  snowAllBelowC: {
    unit: 'degC',
    description: 'all precipitation is snow at or below this temperature of the rain/snow level',
    source: 'from memory: T850 near -4 to -5 degC is the common rule of thumb for snow at low ground',
  },
  rainAllAboveC: {
    unit: 'degC',
    description: 'all precipitation is rain at or above this temperature; linear ramp in between',
    source: 'from memory: common forecasting practice (T850 near 0 degC keeps mountain snow possible)',
  },
  cloudCriticalRhPct: {
    unit: '%',
    description: 'critical relative humidity RH_c of the Sundqvist cloud scheme without vertical motion',
    source: 'Sundqvist et al. (1989) use a threshold near 0.8 for layer cloud (from memory)',
  },
  cloudRhcAscentDropPct: {
    unit: '% RH',
    description: 'how far RH_c is lowered at full QG ascent (omega <= -cloudOmegaScalePaPerS)',
    source: 'Liftwise ramp in the spirit of Slingo (1987): ascent favours layer cloud',
  },
  cloudRhcDescentRisePct: {
    unit: '% RH',
    description: 'how far RH_c is raised at full QG descent (omega >= cloudOmegaScalePaPerS)',
    source: 'Liftwise ramp in the spirit of Slingo (1987): subsidence dissolves layer cloud',
  },
  cloudOmegaScalePaPerS: {
    unit: 'Pa s-1',
    description: '|omega| at which the RH_c adjustment reaches its full size (linear in between)',
    source: 'Liftwise default; synoptic omega is 0.1 to 1 Pa s-1 (textbook order of magnitude, from memory)',
  },
  cloudLowMidBoundaryHpa: {
    unit: 'hPa',
    description: 'boundary between low and middle cloud (low: p > boundary)',
    source: 'common practice (ISCCP-style 680 hPa boundary)',
  },
  cloudMidHighBoundaryHpa: {
    unit: 'hPa',
    description: 'boundary between middle and high cloud (high: p <= boundary)',
    source: 'common practice (ISCCP-style 440 hPa boundary)',
  },
  solarConstantWm2: {
    unit: 'W m-2',
    description: 'total solar irradiance at 1 AU, for the extraterrestrial irradiance of the clearness index',
    source: 'Kopp and Lean (2011), 1360.8 +- 0.5 W m-2',
  },
  cloudAttenuationA: {
    unit: '1',
    description: 'a of the cloud attenuation GHI = GHI_cs (1 - a N^b)',
    source: 'Kasten and Czeplak (1980): a = 0.75',
  },
  cloudAttenuationB: {
    unit: '1',
    description: 'b of the cloud attenuation GHI = GHI_cs (1 - a N^b)',
    source: 'Kasten and Czeplak (1980): b = 3.4',
  },
  albedo: {
    unit: '1',
    description: 'ground reflectance for the reflected part of the plane-of-array irradiance (zones may override)',
    source: 'common practice: 0.2 for grass and open ground',
  },
  gammaPerK: {
    unit: 'K-1',
    description: 'PV power temperature coefficient (zones may override)',
    source: 'common practice, from memory: -0.0037 to -0.0047 K-1 for crystalline silicon',
  },
  noctC: {
    unit: 'degC',
    description: 'nominal operating cell temperature of the NOCT cell-temperature model',
    source: 'common practice: 45 degC for open-rack crystalline modules (NOCT conditions 800 W m-2, 20 degC air, 1 m s-1 wind)',
  },
  snowDdfMmPerDayK: {
    unit: 'mm d-1 K-1',
    description: 'degree-day factor for snowmelt (catchments may override)',
    source: 'Hock (2003): about 2.5 to 6 mm d-1 K-1 for snow (from memory)',
  },
  meltThresholdC: {
    unit: 'degC',
    description: 'threshold temperature T0 of degree-day melt',
    source: 'Hock (2003): usually 0 degC',
  },
};

/** The first calibration set: the defaults every run starts with. */
export const DEFAULT_CALIBRATION_SET: CalibrationSet = {
  version: 1,
  name: 'Liftwise defaults',
  note: 'Published and common-practice starting values; precipitation efficiency is uncalibrated.',
  parameters: {
    precipCriticalRhPct: 80,
    precipEfficiency: 0.8,
    rainSnowLevel: '850hPa',
    snowAllBelowC: -4,
    rainAllAboveC: 0,
    cloudCriticalRhPct: 80,
    cloudRhcAscentDropPct: 10,
    cloudRhcDescentRisePct: 10,
    cloudOmegaScalePaPerS: 0.5,
    cloudLowMidBoundaryHpa: 680,
    cloudMidHighBoundaryHpa: 440,
    solarConstantWm2: 1361,
    cloudAttenuationA: 0.75,
    cloudAttenuationB: 3.4,
    albedo: 0.2,
    gammaPerK: -0.004,
    noctC: 45,
    snowDdfMmPerDayK: 3.5,
    meltThresholdC: 0,
  },
};

export const DEFAULT_CALIBRATION_PARAMETERS: CalibrationParameters = DEFAULT_CALIBRATION_SET.parameters;
