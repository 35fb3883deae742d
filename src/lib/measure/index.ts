/** Public API of the measurement core (pure domain: plain data in, plain data out). */
export * from './types';
export {
	tankCapacitanceF,
	partCapacitanceFromResonance,
	resonanceFromPartCapacitance,
	qualityFactor,
	partEsrOhm,
	type TankSetup,
	type PartCapacitance
} from './convert';
export {
	calibrateFixture,
	calibrationInForce,
	DEFAULT_CALIBRATION_LIMITS,
	DEFAULT_VALIDITY_HOURS,
	type Calibration,
	type CalibrationInput,
	type CalibrationLimits,
	type CalibrationRefusal
} from './calibration';
export {
	fitJunction,
	capacitanceAtBiasF,
	capacitanceRatio,
	sensitivityFPerV,
	DEFAULT_POOR_FIT_RMS_PCT,
	type JunctionFit
} from './fit';
export { levenbergMarquardt, type LmProblem, type LmResult } from './lm';
export {
	validateSpecPlan,
	judgeUnit,
	biasLabel,
	DEFAULT_BINS,
	BIN_PRIORITY,
	GOOD_BIN,
	BIAS_MATCH_V,
	type PlanError,
	type JudgeInput,
	type Judgement
} from './spec';
export { evaluateUnit, judgeCapacitances, type CapacitanceJudgement, type CapacitancePoint, type EvaluateInput, type EvaluateResult, type UnitPoint } from './evaluate';
export { formMatchedSets, isMatchedSet, MATCHING_WINDOW, MATCHING_SCAN, type MatchPart, type MatchResult } from './matching';
