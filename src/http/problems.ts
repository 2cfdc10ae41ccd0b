/**
 * The one catalogue of problem types (RFC 9457 problem details). Every error response of the
 * service is one of these; `openapi.yaml` lists the same slugs and a test keeps them in step.
 */

export const PROBLEM_TYPES = {
  'invalid-rows': { status: 422, title: 'The upload has invalid rows' },
  'too-many-labels': { status: 422, title: 'A dimension has too many labels' },
  'spend-too-large': { status: 422, title: "A customer's spend is beyond what a report can sum" },
  'invalid-columns': { status: 422, title: 'The upload names columns that are not known' },
  'malformed-body': { status: 400, title: 'The request body cannot be read' },
  'invalid-request': { status: 400, title: 'The request is not valid' },
  'unsupported-media-type': { status: 415, title: 'Unsupported content type' },
  'payload-too-large': { status: 413, title: 'The upload is too large' },
  'not-found': { status: 404, title: 'Not found' },
  'method-not-allowed': { status: 405, title: 'Method not allowed' },
  'not-acceptable': { status: 406, title: 'No acceptable representation' },
  conflict: { status: 409, title: 'Conflict' },
  unauthorized: { status: 401, title: 'Authentication required' },
  forbidden: { status: 403, title: 'Not allowed for this key' },
  'cross-site': { status: 403, title: 'Cross-site request refused' },
  'rate-limited': { status: 429, title: 'Too many requests' },
  unavailable: { status: 503, title: 'Service unavailable' },
  'request-timeout': { status: 408, title: 'Request timeout' },
  internal: { status: 500, title: 'Internal error' },
} as const satisfies Record<string, { status: number; title: string }>;

export type ProblemSlug = keyof typeof PROBLEM_TYPES;

/** Problem type URIs are relative references (RFC 9457 §3.1.1), resolved against the service's own address. */
export function problemTypeUri(slug: ProblemSlug): string {
  return `/problems/${slug}`;
}

export interface ProblemBody {
  type: string;
  title: string;
  status: number;
  detail: string;
  instance?: string;
  [extension: string]: unknown;
}

/** Thrown anywhere in request handling; the error handler turns it into a problem+json response. */
export class Problem extends Error {
  override name = 'Problem';
  readonly status: number;
  constructor(
    readonly slug: ProblemSlug,
    readonly detail: string,
    readonly extensions: Record<string, unknown> = {},
    readonly headers: Record<string, string> = {},
  ) {
    super(detail);
    this.status = PROBLEM_TYPES[slug].status;
  }

  toBody(instance?: string): ProblemBody {
    return {
      type: problemTypeUri(this.slug),
      title: PROBLEM_TYPES[this.slug].title,
      status: this.status,
      detail: this.detail,
      ...(instance === undefined ? {} : { instance }),
      ...this.extensions,
    };
  }
}
