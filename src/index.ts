/**
 * lossprobe library entry point: the observer model, typed, for use from a
 * researcher's own scripts.
 */
export type { Distribution } from './observer/distributions/types.js';
export { createDistribution, distributionSchema, distributionFamilies, type DistributionSpec } from './observer/distributions/registry.js';
export { Gaussian } from './observer/distributions/gaussian.js';
export { LogNormal } from './observer/distributions/logNormal.js';
export { Gamma } from './observer/distributions/gamma.js';
export { Uniform } from './observer/distributions/uniform.js';
export { GaussianMixture } from './observer/distributions/gaussianMixture.js';
export type { SensoryNoise, Warp } from './observer/noise/types.js';
export { createNoise, noiseSchema, noiseFamilies, type NoiseSpec } from './observer/noise/registry.js';
export { ConstantNoise } from './observer/noise/constant.js';
export { ScalarNoise } from './observer/noise/scalar.js';
export { GeneralizedNoise } from './observer/noise/generalized.js';
export { LogGaussianNoise } from './observer/noise/logGaussian.js';
export type { LossFunction, LossParameter } from './observer/loss/types.js';
export { createLoss, lossFamilies, lossFamily, lossSchema, type LossSpec, type LossFamily } from './observer/loss/registry.js';
export { squaredLoss } from './observer/loss/squared.js';
export { absoluteLoss } from './observer/loss/absolute.js';
export { hitOrMissLoss } from './observer/loss/hitOrMiss.js';
export { powerLoss } from './observer/loss/power.js';
export { asymmetricLinearLoss } from './observer/loss/asymmetricLinear.js';
export { invertedGaussianLoss } from './observer/loss/invertedGaussian.js';
export type { Observer, Dataset, ResponseScale } from './observer/observer.js';
export { observerProblems } from './observer/observer.js';
export { GridPosterior } from './observer/gridPosterior.js';
export { buildPosteriorGrid, measurementRange } from './observer/gridFactory.js';
export { EstimateCurve, estimateAt } from './observer/estimateCurve.js';
export { ConditionResponse, logLikelihood, responseModels } from './observer/responseDensity.js';
export { simulateResponses } from './observer/sampler.js';
export { closedFormEstimate, evaluateClosedForm, gaussianPosterior } from './observer/closedForm.js';
export { streamFromKey, type RandomStream } from './numerics/rng.js';
export { nelderMead, bfgs } from './numerics/optimize.js';
export { analyticPreview, type AnalyticPreview } from './design/analyticPreview.js';
export { sizing, type Sizing } from './analysis/sizing.js';
export { confidenceSequence } from './analysis/confidenceSequence.js';
