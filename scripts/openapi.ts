/** `npm run openapi`: writes openapi.yaml from openapi/source.yaml and the resource declarations. */
import fs from 'node:fs';
import { OPENAPI_PATH } from '../src/http/openapi-routes.js';
import { renderOpenapi } from '../src/http/openapi-document.js';

fs.writeFileSync(OPENAPI_PATH, renderOpenapi());
console.log(`wrote ${OPENAPI_PATH}`);
