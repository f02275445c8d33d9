/**
 * The cautions of SCIENCE.md section 8: shown in the interface, the e-mails and every export,
 * wherever a number could mislead an operator.
 */
export const CAUTIONS = [
  'Liftwise supports trading decisions; it is not a safety forecast.',
  'Diagnosed precipitation, cloud, solar and inflow signals are model-derived estimates, not observations.',
  'Official weather warnings come from the national meteorological service.',
  'Dam and reservoir operations follow local codes and licensed practice, not these figures.',
] as const;
