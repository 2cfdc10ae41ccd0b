/**
 * Writes the OpenAPI document: the hand-written part (paths, descriptions, problem types) from
 * `openapi/source.yaml`, and the resource schemas generated from their declarations. A schema
 * that is itself a component appears inside another as a `$ref`.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { isScalar, parseDocument, visit, type Node } from 'yaml';
import { Plan, PlanRequest, ReportPlan, SegmentPlan } from '../plan/index.js';
import { ReportDefinition, ReportDefinitionBody, ReportSource } from '../report/definition/index.js';
import {
  Correlation,
  DataQuality,
  Descriptives,
  DimensionProfile,
  HistogramFigure,
  PopulationFigures,
  SegmentChange,
  SegmentRow,
  Snapshot,
  SnapshotSegment,
  Report,
  ReportList,
  SegmentTable,
  SnapshotList,
  SnapshotMeta,
} from '../report/shapes/index.js';
import { Campaign, CampaignList, Health, Receipt, ReceiptList, RejectedRowsPage } from './schemas.js';

const OPENAPI_SOURCE_PATH = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../openapi/source.yaml');

/** The generated components, by name, in the order they are written. */
const COMPONENTS: Record<string, object> = {
  Health,
  Receipt,
  ReceiptList,
  RejectedRowsPage,
  Campaign,
  CampaignList,
  ReportDefinition: ReportDefinitionBody,
  SavedReportDefinition: ReportDefinition,
  ReportSource,
  Report,
  ReportList,
  SnapshotMeta,
  SnapshotList,
  SegmentRow,
  SegmentTable,
  SegmentChange,
  SnapshotSegment,
  Descriptives,
  Correlation,
  HistogramFigure,
  PopulationFigures,
  DimensionProfile,
  DataQuality,
  Snapshot,
  PlanRequest,
  Plan,
  SegmentPlan,
  ReportPlan,
};

/** A plain copy of `schema` in which every nested component is replaced by a reference to it. */
function withReferences(schema: unknown, names: Map<object, string>, isRoot = true): unknown {
  if (Array.isArray(schema)) return schema.map((item) => withReferences(item, names, false));
  if (typeof schema !== 'object' || schema === null) return schema;
  const name = names.get(schema);
  if (!isRoot && name !== undefined) return { $ref: `#/components/schemas/${name}` };
  return Object.fromEntries(Object.entries(schema).map(([key, value]) => [key, withReferences(value, names, false)]));
}

/** Writes maps and lists that hold only scalars on one line, as the hand-written part does. */
function compactLeaves(node: Node): void {
  visit(node, {
    Map: (_key, map) => {
      if (map.items.every((pair) => isScalar(pair.value))) map.flow = true;
    },
    Seq: (_key, seq) => {
      if (seq.items.every((item) => isScalar(item))) seq.flow = true;
    },
  });
}

/** The complete openapi.yaml as text. */
export function renderOpenapi(): string {
  const document = parseDocument(fs.readFileSync(OPENAPI_SOURCE_PATH, 'utf8'));
  const names = new Map(Object.entries(COMPONENTS).map(([name, schema]) => [schema, name]));
  for (const [name, schema] of Object.entries(COMPONENTS)) {
    if (document.hasIn(['components', 'schemas', name])) throw new Error(`openapi/source.yaml already has a schema ${name}, which is generated`);
    const node = document.createNode(withReferences(schema, names));
    compactLeaves(node);
    document.setIn(['components', 'schemas', name], node);
  }
  return document.toString({ lineWidth: 0 });
}
