/** What a report computes: its definition's fields, their defaults and their validation. */
export {
  InvalidDefinitionError,
  normalizeDefinition,
  type Adjustment,
  type DefinitionIssue,
  type DefinitionLookup,
  type RankBy,
  type RankOrder,
  type RefreshMode,
  type ReportDefinition,
  type ReportSource,
  type ValueBasis,
} from './definition.js';
