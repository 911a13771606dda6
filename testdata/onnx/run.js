'use strict';
// Runs ONNX files with onnxruntime-node for the Go tests, driven by
// voters/onnxexport/onnxrun. The request (JSON on stdin) holds a list of jobs, each
// a model path and a batch of rows, one tensor per input:
//   {"jobs": [{"model": PATH, "inputs": [{"name": N, "type": "double", "b64": B}
//                                       | {"name": N, "type": "string", "strings": [...]}]}]}
// Doubles travel as base64 of little-endian float64 bytes, so NaN, +Inf,
// -Inf and every bit of a value arrive as they were sent. The answer (JSON
// on stdout) gives each job's outputs by name, doubles the same way, int64
// as numbers, strings as strings, and the runtime's version.
const fs = require('node:fs');
const ort = require('onnxruntime-node');

function doubles(b64) {
  const buf = Buffer.from(b64, 'base64');
  const out = new Float64Array(buf.length / 8);
  for (let i = 0; i < out.length; i++) out[i] = buf.readDoubleLE(i * 8);
  return out;
}

function encode(t) {
  switch (t.type) {
    case 'float64': {
      const buf = Buffer.alloc(t.data.length * 8);
      t.data.forEach((v, i) => buf.writeDoubleLE(v, i * 8));
      return { type: 'double', dims: t.dims, b64: buf.toString('base64') };
    }
    case 'int64':
      return { type: 'int64', dims: t.dims, ints: Array.from(t.data, Number) };
    case 'string':
      return { type: 'string', dims: t.dims, strings: Array.from(t.data) };
    default:
      throw new Error('unexpected output type ' + t.type);
  }
}

async function main() {
  const req = JSON.parse(fs.readFileSync(0, 'utf8'));
  const results = [];
  for (const job of req.jobs) {
    const session = await ort.InferenceSession.create(job.model);
    const feeds = {};
    for (const inp of job.inputs) {
      if (inp.type === 'double') {
        const data = doubles(inp.b64);
        feeds[inp.name] = new ort.Tensor('float64', data, [data.length]);
      } else {
        feeds[inp.name] = new ort.Tensor('string', inp.strings, [inp.strings.length]);
      }
    }
    const out = await session.run(feeds);
    const res = {};
    for (const [name, t] of Object.entries(out)) res[name] = encode(t);
    results.push(res);
    await session.release();
  }
  const version = require('onnxruntime-node/package.json').version;
  process.stdout.write(JSON.stringify({ runtime: 'onnxruntime-node ' + version, results }));
}

main().catch((err) => {
  process.stderr.write(String(err && err.stack ? err.stack : err) + '\n');
  process.exit(1);
});
