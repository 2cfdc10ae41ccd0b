/** Choosing a representation from the Accept header, one way for every route that offers several. */
import type { FastifyRequest } from 'fastify';
import { Problem } from './problems.js';

/**
 * The format whose media type the client's Accept header prefers; the first one when the
 * header is absent or empty; a 406 problem saying `offered` when it accepts none of them.
 */
export function negotiate<Format extends string>(request: FastifyRequest, mediaTypes: Readonly<Record<Format, string>>, offered: string): Format {
  const formats = Object.keys(mediaTypes) as Format[];
  if ((request.headers.accept ?? '').trim() === '') return formats[0] as Format;
  const chosen = request.accepts().type(formats.map((format) => mediaTypes[format]));
  const negotiated = formats.find((format) => mediaTypes[format] === chosen);
  if (negotiated === undefined) throw new Problem('not-acceptable', offered);
  return negotiated;
}
