/**
 * A client that announces an upload body and then sends nothing must not hold up anyone else:
 * the body is received before the upload's write transaction opens, and a body that stalls is
 * answered 408 after the idle timeout.
 */
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, countRows, csvText, upload, startApp } from '../support/upload-client.js';

/** Long enough that everything below finishes first even on a slow, shared machine. */
const IDLE_TIMEOUT_MS = 30_000;

/** Sends the headers of an upload that promises 50 bytes and then holds the connection open. */
function stallUpload(port: number): { response: Promise<string>; socket: net.Socket } {
  const socket = net.connect(port, '127.0.0.1');
  socket.write(['POST /v1/customers HTTP/1.1', 'Host: 127.0.0.1', 'Content-Type: text/csv', 'Content-Length: 50', '', ''].join('\r\n'));
  const response = new Promise<string>((resolve, reject) => {
    let received = '';
    socket.on('data', (chunk: Buffer) => (received += chunk.toString('utf8')));
    socket.on('end', () => resolve(received));
    socket.on('close', () => resolve(received));
    socket.on('error', reject);
  });
  return { response, socket };
}

describe.each(TEST_DIALECTS)('a stalled upload on %s', (dialect) => {
  it('blocks no other upload, erasure, report or read', { timeout: 25_000 }, async () => {
    const testApp = await startApp(dialect, { uploadIdleTimeoutMs: IDLE_TIMEOUT_MS, maxEventLoopDelayMs: 0 });
    const { app } = testApp;
    await app.listen({ port: 0, host: '127.0.0.1' });
    const stalled = stallUpload((app.server.address() as AddressInfo).port);
    let stalledSettled = false;
    void stalled.response.finally(() => (stalledSettled = true));
    // Let the stalled request reach its handler before the others start.
    await new Promise((resolve) => setTimeout(resolve, 200));

    const customers = await upload(app, '/v1/customers', CSV, csvText('customer_id,birth_date,region,channel,customer_type', 'S1,1980-01-01,Fennwick,web shop,individual', 'S2,1990-01-01,Saltmere,web shop,individual'));
    expect(customers.statusCode, customers.body).toBe(201);
    const contacts = await upload(app, '/v1/campaigns/stall/contacts', CSV, csvText('customer_id,contacted_at,converted,revenue', 'S1,2026-03-02,1,10.00', 'S2,2026-03-02,0,0'));
    expect(contacts.statusCode, contacts.body).toBe(201);
    const receipt = await app.inject({ method: 'GET', url: customers.headers['location'] as string });
    expect(receipt.statusCode).toBe(200);
    const created = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'while stalled', source: { campaign_ids: ['stall'] }, dimensions: ['region'] } });
    expect(created.statusCode, created.body).toBe(201);
    const reportId = created.json<{ report_id: string }>().report_id;
    const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
    expect(refreshed.statusCode, refreshed.body).toBe(201);
    expect((await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/snapshots/latest` })).statusCode).toBe(200);
    expect((await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'text/csv' } })).statusCode).toBe(200);
    expect((await app.inject({ method: 'GET', url: `/reports/${reportId}` })).statusCode).toBe(200);
    expect((await app.inject({ method: 'DELETE', url: '/v1/customers/S2' })).statusCode).toBe(204);

    // All of it happened while the stalled upload was still waiting for its body.
    expect(stalledSettled).toBe(false);
    // Only the two uploads above were stored.
    expect((await countRows(testApp)).ingests).toBe(2);
    stalled.socket.destroy();
  });

  it('answers 408 to an announced body that never comes, after the idle timeout', async () => {
    const testApp = await startApp(dialect, { uploadIdleTimeoutMs: 300 });
    await testApp.app.listen({ port: 0, host: '127.0.0.1' });
    const stalled = stallUpload((testApp.app.server.address() as AddressInfo).port);
    const answer = await stalled.response;
    expect(answer).toMatch(/^HTTP\/1\.1 408 /);
    expect(answer).toMatch(/content-type: application\/problem\+json/i);
    expect(answer).toContain('"type":"/problems/request-timeout"');
    expect(answer).toMatch(/connection: close/i);
    expect((await countRows(testApp)).ingests).toBe(0);
  });

  it('answers 408 to a body that stops half-way, and stores nothing of it', async () => {
    const testApp = await startApp(dialect, { uploadIdleTimeoutMs: 300 });
    const { app } = testApp;
    await app.listen({ port: 0, host: '127.0.0.1' });
    const socket = net.connect((app.server.address() as AddressInfo).port, '127.0.0.1');
    const body = csvText('customer_id,birth_date,region,channel,customer_type', 'H1,1980-01-01,Fennwick,web shop,individual');
    socket.write(['POST /v1/customers HTTP/1.1', 'Host: 127.0.0.1', 'Content-Type: text/csv', `Content-Length: ${body.length + 40}`, '', body].join('\r\n'));
    const answer = await new Promise<string>((resolve, reject) => {
      let received = '';
      socket.on('data', (chunk: Buffer) => (received += chunk.toString('utf8')));
      socket.on('close', () => resolve(received));
      socket.on('error', reject);
    });
    expect(answer).toMatch(/^HTTP\/1\.1 408 /);
    expect(answer).toContain(`${Buffer.byteLength(body)} bytes received`);
    expect((await countRows(testApp)).customers).toBe(0);
  });
});
