// The ingest workers load one bundled module from a data: URL (ingest/worker-code.ts). A data:
// module has no folder: it can import only Node's built-in modules, and import.meta.url would not
// name a file. Checked on the bundle itself, and by running it in a worker thread.
import { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { ingestWorkerUrl } from '../../ingest/worker-code.ts';

const code = () => {
  const url = ingestWorkerUrl();
  expect(url.protocol).toBe('data:');
  return Buffer.from(url.href.slice(url.href.indexOf(',') + 1), 'base64').toString('utf8');
};

describe('ingest worker bundle', () => {
  it('imports nothing but node: built-ins and never uses import.meta', () => {
    const text = code();
    const specifiers = [...text.matchAll(/^import\s[^'"]*['"]([^'"]+)['"]/gm)].map((m) => m[1]);
    expect(specifiers.length).toBeGreaterThan(0);
    expect(specifiers.filter((s) => !s.startsWith('node:'))).toEqual([]);
    expect(text).not.toMatch(/\bimport\.meta\b/);
    expect(text).not.toMatch(/\brequire\(["'](?!node:)/); // bundled CommonJS (fft.js) is inlined, not required
  });

  it('is built once per process', () => {
    expect(ingestWorkerUrl()).toBe(ingestWorkerUrl());
  });

  it('starts in a worker thread and answers a request for a file that does not exist with a failed open', async () => {
    const worker = new Worker(ingestWorkerUrl());
    try {
      const reply = await new Promise<Record<string, unknown>>((resolve, reject) => {
        worker.once('message', resolve);
        worker.once('error', reject);
        worker.postMessage({
          id: 7,
          kind: 'process',
          rec: { row: 1, subject: 's', session: null, group: null, recordingPath: '/nonexistent/x.edf', scoringPath: null, covariates: {} },
          params: {},
          runId: 'r',
        });
      });
      expect(reply).toMatchObject({ id: 7, kind: 'failed', step: 'open', field: 'file' });
      expect(String(reply.message)).toMatch(/cannot open the file \(ENOENT\)/);
    } finally {
      await worker.terminate();
    }
  });
});
