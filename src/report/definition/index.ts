/** What a report computes: its definition's fields, their defaults and their validation. */
export {
  InvalidDefinitionError,
  ReportDefinition,
  ReportDefinitionBody,
  ReportSource,
  normalizeDefinition,
  withCurrentDefaults,
  verdictMetric,
  DEFAULT_EQUIVALENCE_MARGIN,
  type Adjustment,
  type DefinitionIssue,
  type DefinitionLookup,
  type RankBy,
  type RankOrder,
  type RefreshMode,
  type ValueBasis,
  type VerdictMetric,
} from './definition.js';
