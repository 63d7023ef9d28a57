import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

/**
 * Runs a python3 script (the machine's numpy/scipy are the outside reference for numeric checks).
 * Each named array is written as little-endian float64 to a file whose path the script finds in
 * the dict `inputs` (load with numpy.fromfile(inputs['x'])); the script prints one JSON value on
 * its last line, which is returned parsed.
 */
export function runPython<T = unknown>(script: string, arrays: Record<string, ArrayLike<number>> = {}): T {
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-py-'));
  try {
    const inputs: Record<string, string> = {};
    for (const [name, values] of Object.entries(arrays)) {
      const file = path.join(dir, `${name}.f64`);
      writeFileSync(file, Buffer.from(Float64Array.from(values).buffer));
      inputs[name] = file;
    }
    const prelude = `import json, numpy\ninputs = json.loads(${JSON.stringify(JSON.stringify(inputs))})\n`;
    const file = path.join(dir, 'script.py');
    writeFileSync(file, prelude + script);
    const out = execFileSync('python3', [file], { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
    const lines = out.trim().split('\n');
    return JSON.parse(lines[lines.length - 1]) as T;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
