/** What a report computes: its definition's fields, their defaults and their validation. */
export { InvalidDefinitionError, normalizeDefinition, type DefinitionLookup, type ReportDefinition, type ValueBasis } from './definition.js';
