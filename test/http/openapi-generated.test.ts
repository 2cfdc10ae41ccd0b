import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { renderOpenapi } from '../../src/http/openapi-document.js';
import { OPENAPI_PATH } from '../../src/http/openapi-routes.js';

describe('openapi.yaml', () => {
  it('is what openapi/source.yaml and the declarations produce', () => {
    const committed = fs.readFileSync(OPENAPI_PATH, 'utf8');
    expect(committed === renderOpenapi(), 'openapi.yaml is out of date with openapi/source.yaml or the schema declarations: run `npm run openapi`').toBe(true);
  });
});
