/**
 * Deal layer public API. Importing this index loads mathjs (through the expression checker); a worker that only
 * evaluates compiled deals should import `./dealEvaluator.ts` or `./dealEvaluatorFactory.ts` directly.
 */
export * from './types.ts';
export { dealSchema, parseDealFile, dealShapeIssues, IDENT } from './dealSchema.ts';
export {
  checkExpression,
  LANGUAGE_FUNCTIONS,
  BUILTIN_SYMBOLS,
  MAX_EXPRESSION_DEPTH,
  MAX_EXPRESSION_LENGTH,
  RESERVED_NAMES,
  type CheckResult,
  type CheckedExpr,
  type ExpressionContext,
  type ExpressionError,
  type SymbolKind,
  type LanguageFunction,
} from './checkExpression.ts';
export { checkDeal, compileDeal, dealSymbols, expressionContextOf, type DealCheck } from './compileDeal.ts';
export {
  createEvaluators,
  eventTimes,
  dealPayoffFactoryUrl,
  DEAL_PAYOFF_FACTORY,
  type DealPayoffDescription,
} from './dealPayoffFactory.ts';
export { analyseDeal } from './analyseDeal.ts';
export {
  makeDealEvaluator,
  makeDealRunner,
  evaluateDetailed,
  type DealEvaluatorOptions,
  type DetailedEvaluation,
  type CashFlowColumn,
  type ExerciseColumn,
} from './dealEvaluator.ts';
export { expandSchedule, toYearFraction, isoDayNumber } from './dealDates.ts';
