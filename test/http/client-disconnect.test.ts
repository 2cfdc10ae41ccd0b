/** A client that hangs up mid-upload is an ordinary event, logged at info, never as a service error. */
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { captureLogs, LEVELS } from '../support/log-capture.js';
import { countRows, startApp } from '../support/upload-client.js';

describe.each(TEST_DIALECTS)('client disconnects on %s', (dialect) => {
  it('logs an upload abandoned half-way at info level and stores nothing', async () => {
    const logs = captureLogs('info');
    const testApp = await startApp(dialect, {}, undefined, logs.logger);
    const { app } = testApp;
    await app.listen({ port: 0, host: '127.0.0.1' });
    const socket = net.connect((app.server.address() as AddressInfo).port, '127.0.0.1');
    await new Promise((resolve) => socket.once('connect', resolve));
    const half = 'customer_id,birth_date,region,channel,customer_type\nD1,1980-01-01,Fennwick,web shop,individual\n';
    socket.write(['POST /v1/customers HTTP/1.1', 'Host: 127.0.0.1', 'Content-Type: text/csv', `Content-Length: ${half.length * 2}`, '', half].join('\r\n'));
    await new Promise((resolve) => setTimeout(resolve, 200));
    socket.destroy();

    const line = await logs.waitFor('client disconnected');
    expect(line.level).toBe(LEVELS.info);
    // Give any other logging of the same request its turn before looking for errors.
    await new Promise((resolve) => setTimeout(resolve, 200));
    expect(logs.lines.filter((entry) => entry.level >= LEVELS.error)).toEqual([]);
    expect((await countRows(testApp)).customers).toBe(0);
  });
});
