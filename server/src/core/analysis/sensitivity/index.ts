/** Sensitivities to the constants and tolerance bands (methods in docs/dynamics.md, "Sensitivities and tolerances"). */
export { pointDerivatives, modelParameters, type ParameterInfo, type PointDerivative, type PointDerivatives, type SparseDelta } from './derivatives';
export { sensitivities, rankedEffects, ILL_CONDITIONED, type Sensitivities, type ModeSensitivity, type GainSensitivity, type RankedEffect } from './sensitivity';
export { latinHypercube, randomStream, samplePlan, sampleConstants, sampleValues, evaluateAt, evaluateChunk, type SamplePlan, type SampleResult, type PlanConstant } from './sampling';
export { sensitivityReport, withSamples, wilson, type SensitivityReport, type SampledBands, type ModeBand, type GainBand, type ToleranceConstant } from './bands';
