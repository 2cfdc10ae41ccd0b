/**
 * Checks responses against openapi.yaml, the service's contract. Used by every test app (an
 * onSend hook validates each JSON response of a route the contract knows) and by the contract
 * test itself.
 */
import fs from 'node:fs';
import { Ajv2020 } from 'ajv/dist/2020.js';
import addFormats from 'ajv-formats';
import { parse as parseYaml } from 'yaml';
import { OPENAPI_PATH } from '../../src/http/openapi-routes.js';

type Operation = { responses?: Record<string, { $ref?: string; content?: Record<string, { schema?: unknown }> }> };
export interface ContractDocument {
  paths: Record<string, Record<string, Operation>>;
  components: { schemas: Record<string, unknown>; responses: Record<string, { content?: Record<string, { schema?: unknown }> }> };
}

export const contract = parseYaml(fs.readFileSync(OPENAPI_PATH, 'utf8')) as ContractDocument;

const ajv = new Ajv2020({ strict: false, allErrors: true });
(addFormats as unknown as (instance: Ajv2020) => void)(ajv);
ajv.addSchema(contract as object, 'openapi');

export const HTTP_METHODS = ['get', 'put', 'post', 'delete', 'patch', 'head', 'options'];

/** `/v1/campaigns/:campaign_id/contacts` (fastify) → `/v1/campaigns/{campaign_id}/contacts` (OpenAPI). */
export function toContractPath(routeUrl: string): string {
  return routeUrl.replace(/:([A-Za-z0-9_]+)/g, '{$1}');
}

function pointer(...parts: string[]): string {
  return parts.map((part) => part.replace(/~/g, '~0').replace(/\//g, '~1')).join('/');
}

/**
 * Returns the contract violations of one response: an undeclared status or content type, or a
 * body that fails the declared schema. Routes the contract does not list are not judged here.
 */
export function checkResponse(method: string, routeUrl: string, status: number, contentType: string | undefined, body: string): string[] {
  const path = toContractPath(routeUrl);
  const operation = contract.paths[path]?.[method.toLowerCase()];
  if (!operation) return [];
  const where = `${method} ${path} → ${status}`;
  const declared = operation.responses?.[String(status)];
  if (!declared) return [`${where}: status ${status} is not declared in openapi.yaml`];
  const responseName = declared.$ref?.split('/').pop();
  const response = responseName ? contract.components.responses[responseName] : declared;
  const content = response?.content;
  if (!content) return body === '' ? [] : [`${where}: a body was sent but the contract declares none`];
  const mediaType = contentType?.split(';')[0]?.trim() ?? '';
  if (!(mediaType in content)) return [`${where}: content type "${mediaType}" is not declared (declared: ${Object.keys(content).join(', ')})`];
  if (!mediaType.endsWith('json')) return [];
  const schemaRef = responseName
    ? `openapi#/${pointer('components', 'responses', responseName, 'content', mediaType, 'schema')}`
    : `openapi#/${pointer('paths', path, method.toLowerCase(), 'responses', String(status), 'content', mediaType, 'schema')}`;
  const validate = ajv.getSchema(schemaRef);
  if (!validate) return [`${where}: no schema at ${schemaRef}`];
  let parsed: unknown;
  try {
    parsed = JSON.parse(body);
  } catch {
    return [`${where}: body is not JSON`];
  }
  if (validate(parsed)) return [];
  return (validate.errors ?? []).map((error) => `${where}: ${error.instancePath || '(body)'} ${error.message ?? 'does not match'}`);
}
