/**
 * tubemargin as a library. Data flows one way: text → design → graph → (solve → analysis →
 * report, in later modules). Nothing here does I/O; included files arrive through a
 * `SourceLoader` the caller supplies.
 */
export type { Position, SourceSpan } from './source/span.js';
export { LineIndex, formatLocation } from './source/span.js';
export type { Checked, Diagnostic, DiagnosticCode, Severity } from './source/diagnostic.js';
export { DIAGNOSTIC_CODES, hasErrors, sortDiagnostics } from './source/diagnostic.js';
export { renderDiagnostic, renderDiagnostics } from './source/render.js';
export { closestName, editDistance } from './source/suggest.js';

export type * from './netlist/ast.js';
export { parseDesignText } from './netlist/parser.js';

export type * from './design/model.js';
export { DEFAULT_SETTINGS, GROUND, designNets, isGeneratedName, partPins } from './design/model.js';
export { expandDesign, MAX_ARRAY_LENGTH, MAX_BLOCK_DEPTH, MAX_PARTS } from './design/expand.js';
export { collectSources, MAX_SOURCE_CHARS, type SourceLoader } from './design/sources.js';
export { validateDesign } from './design/validate.js';
export { findPart } from './design/findPart.js';
export { checkDesign } from './design/checkDesign.js';
export { DESIGN_SCHEMA, designFromJson, designToJson, designJsonSchema, type DesignJson } from './design/json.js';
export { loadDesign, looksLikeJson, type LoadedDesign, type LoadOptions } from './design/load.js';

export { MODEL_KINDS, MODEL_KIND_NAMES } from './models/kinds.js';
export { WHY_SUFFIX, figure } from './report/figure.js';
export { TUBE_LIBRARY, findLibraryEntry, type LibraryEntry, type TubeRatings } from './models/library.js';

export { stronglyConnected } from './graph/tarjan.js';
export { buildStageGraph, compareNames, type Loop, type NetNode, type Receiver, type StageGraph } from './graph/stageGraph.js';

export { tubeCurrents, softplus, sigmoid, NOMINAL_VARIATION, type SectionVariation, type TubeCurrents } from './models/tubeEquations.js';
export { SparseLu } from './solve/sparseLu.js';
export type { LinearSystem, LinearSystemFactory } from './solve/linearSystem.js';
export { compileCircuit, type Circuit, type CompileOptions } from './solve/circuit.js';
export { nodesOutsideSpan, transientSpan, voltageSpan, withinSpan, type VoltageSpan } from './solve/voltageSpan.js';
export { DcSystem, type NewtonSettings } from './solve/dcSystem.js';
export {
  solveOperatingPoint,
  logicThreshold,
  RESIDUAL_LIMIT,
  type OperatingPoint,
  type SolveOptions,
  type StateHint,
  type HintOutcome,
  type TubeOperatingPoint,
  type ResistorOperatingPoint,
} from './solve/operatingPoint.js';

export { unityGainPoints } from './analysis/unityGain.js';
export { staticNoiseMargin, type ButterflyResult, type TransferCurve } from './analysis/staticNoiseMargin.js';
export { sweepTransfer, type SweepOptions } from './analysis/transferCurve.js';
export { applyParameters, corners, designParameters, MAX_CORNER_PARAMETERS, type DesignParameter } from './analysis/parameters.js';
export { triggerMargin, type TriggerAnswer, type TriggerQuestion } from './analysis/switching.js';
export { adjointSlopes, worstCaseVoltage, type WorstCaseAnswer, type WorstCaseQuestion } from './analysis/worstCase.js';
export { AGEING_SCENARIOS, emissionBand, findScenario, heaterEmission, type AgeingScenario } from './analysis/ageing.js';
export { searchVertex, type Band, type Probe, type VertexResult } from './analysis/vertex.js';
export { buildRegion, indexDesign, type DesignIndex, type Region } from './analysis/region.js';
export { LocalProblem, regionParameters, type LocalParameter } from './analysis/localProblem.js';
export { localDesign } from './analysis/localDesign.js';
export { LevelChain, type ChainNet, type NetLevels, type LevelCase, type CaseResult, type NetPolarity } from './analysis/levelChain.js';
export { receiverThresholds, type ReceiverThresholds } from './analysis/receiverThresholds.js';
export { cutoffMargin, driveMargin, cutoffGrid, CUTOFF_FRACTION, type GridMargin } from './analysis/gridMargins.js';
export { fanoutHeadroom, standardLoad, MAX_EXTRA_LOADS, type StandardLoad } from './analysis/fanoutHeadroom.js';
export { latchCheck, type LatchInput, type LatchResult } from './analysis/latchCheck.js';
export { CORNER_WORK, CornerBudget, designAtValues, EXHAUSTIVE_PARAMETERS, reproduceWitness, searchCorners, WholeDesign, type CornerAnswer, type CornerQuestion, type Reproduction, type Witness } from './analysis/cornerSearch.js';
export { MAX_WHOLE_STATES, Refiner, wholeStates, type NetRefinement, type RefineQuestion, type WholeState } from './analysis/refineNets.js';
export { checkMargins, type CheckOptions, type CheckResult, type NetCheck, type Cause, type ReceiverMargin } from './analysis/check.js';
export { DISTRIBUTIONS, GRADED_INNER, SampleDrawer, Sampler, drawSample, samplingThresholds, summarizeSamples, wilsonInterval, type Distribution, type MonteCarloResult, type SampleOutcome, type SamplingSetup } from './analysis/monteCarlo.js';
export { analyzeAt, deviationsOf, valueAt, type Analysis, type Deviations } from './analysis/analyzeAt.js';
export { shrinkFailure, type Deviation, type ShrinkResult } from './analysis/shrink.js';
export { axisValues, MAX_SWEEP_POINTS, sweepRails, type SweepAxis, type RailSweepOptions, type SweepPoint, type RailSweepResult } from './analysis/sweep.js';
export { fitReadings, levenbergMarquardt, type FitAnswer, type FitResult, type FittedParameters, type Reading } from './models/fit.js';
export { parseReadings, READING_COLUMNS, OPTIONAL_COLUMNS } from './models/readings.js';
export { E_SERIES, preferredValues, type SeriesName } from './design/preferredValues.js';
export { tuneStage, type TuneCandidate, type TuneOptions, type TuneResult } from './analysis/tune.js';
export { DERATING, ratingsOf, type HeaterBudget, type Ratings, type ResistorRating, type SectionRating } from './analysis/ratings.js';
export { parseSequence, type SequenceAction } from './analysis/sequence.js';
export { stepDesign, watchedNets, type StepResult, type StepRow } from './analysis/stepper.js';
export { parseQuantity, parseWaveform, WAVEFORM_FORMS, type Waveform } from './analysis/waveform.js';
export { simulate, interelectrodeOf, type TransientOptions, type TransientResult } from './solve/transient.js';
export { causeNets, stageTimings, statesAt, type StageTiming } from './analysis/timing.js';
export { pulseDesign, type PulseOptions, type PulseOutcome, type PulseRun } from './analysis/pulseRun.js';
export { clockLimit, atCorner, stageTime, TIMING_CORNERS, type ClockFailure, type ClockLimitOptions, type ClockLimitResult, type TimingCorner } from './analysis/clockLimit.js';
export type { Progress } from './progress.js';
