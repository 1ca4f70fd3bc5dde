export {
  runAnalysis,
  summarizeAnalysis,
  ANALYSIS_CAUTION,
  type AnalysisInput,
  type AnalysisResult,
  type AnalysisSummary,
  type RecordBreak,
  type StretchStart,
} from './analyze';
export { INDICATOR_DIRECTIONS, orientedTau, trendDirectionOf, type RuleDirection, type TrendDirection } from './direction';
export { extentPoints, parseExtent, MONTH_MS, YEAR_MS, type Extent, type ParsedExtent } from './extent';
export { unjudgedWindows } from './coverage';
export { AnalysisInputError } from './errors';
export { analysisSettingsSchema, INDICATOR_NAMES, SURROGATE_METHODS, type AnalysisSettings, type IndicatorName, type SurrogateMethod } from './settings';
export { DETREND_METHODS, detrend, gaussianSmooth, linearDetrend, linearFit, localLinearSmooth, movingAverage, type DetrendMethod } from './detrend';
export { rollingIndicators, windowMoments, windowPoints, MIN_WINDOW_POINTS } from './rolling';
export { kendallTau, kendallCounts, indicatorTrend, mannKendall, type KendallResult, type MannKendallResult } from './kendall';
export { fitAr1, makeSurrogate, prepareSurrogateJob, surrogatePValue, surrogateTaus, type SurrogateJob } from './surrogates';
export { computeSurrogateTaus } from './surrogate-pool';
export { sensitivityGrid, DEFAULT_SENSITIVITY_BANDWIDTHS, DEFAULT_SENSITIVITY_WINDOWS, type SensitivityResult } from './sensitivity';
export type { TimeKind } from './time-kind';
export { prepareSeries, formatInstant, FLAT_RUN_MIN, type PreparationQuality, type GapReport, type FlatRun, type SamplingChange } from './prepare';
export { runSiteAnalysis, SITE_INDICATORS, type SiteAnalysisResult, type SiteIndicatorName } from './site';
