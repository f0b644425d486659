// `npm run fuzz -- N [seed]`: the WAV reader's fuzzer for longer runs than
// the 20,000 inputs of `npm test`; prints what it found.
import { fuzzWavReader } from "../tests/fuzz/wav-mutator.ts";

const count = Number(process.argv[2] ?? 1_000_000);
const seed = Number(process.argv[3] ?? Date.now() % 2 ** 31);
if (!Number.isInteger(count) || count <= 0) {
  console.error("usage: npm run fuzz -- N [seed]");
  process.exit(2);
}
console.log(`fuzzing the WAV header parser: ${count} inputs, seed ${seed}`);
const started = performance.now();
const report = await fuzzWavReader(seed, count, (done) => console.log(`  ${done} inputs, ${((performance.now() - started) / 1000).toFixed(0)} s`));
console.log(`inputs ${report.inputs}, accepted ${report.accepted}, crashes ${report.crashes.length}`);
console.log(`refused: ${Object.entries(report.refused).map(([code, n]) => `${code} ${n}`).join(", ")}`);
console.log(`slowest input ${report.slowestInput}: ${report.slowestMs.toFixed(1)} ms; total ${((performance.now() - started) / 1000).toFixed(1)} s`);
for (const crash of report.crashes.slice(0, 20)) console.log(`  crash at input ${crash.input}: ${crash.error}`);
process.exit(report.crashes.length > 0 || report.slowestMs >= 100 ? 1 : 0);
