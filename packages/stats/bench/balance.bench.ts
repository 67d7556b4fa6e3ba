/**
 * Balance benchmarks (targets from issue 3):
 * - SMDs for 40 covariates over 1,000,000 participants in two arms: under 1 s on one core and
 *   within 3x of one plain pass summing the same numbers.
 * - Accumulator add: under 1 microsecond per value.
 * Data are synthetic (a fixed LCG), generated before timing. Best of several repeats is printed.
 */
import { categoricalSmd } from '../src/categoricalSmd/categoricalSmd.js';
import { createAccumulator } from '../src/createAccumulator/createAccumulator.js';
import { standardizedMeanDifference } from '../src/standardizedMeanDifference/standardizedMeanDifference.js';

const COVARIATES = 40;
const PARTICIPANTS = 1_000_000;
const PER_ARM = PARTICIPANTS / 2;
const REPEATS = 5;

let seed = 0x2545f491;
function uniform(): number {
  seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
  return seed / 2 ** 32;
}

function bestOf(fn: () => number): { ms: number; sink: number } {
  let best = Number.POSITIVE_INFINITY;
  let sink = 0;
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    sink += fn();
    best = Math.min(best, performance.now() - t0);
  }
  return { ms: best, sink };
}

export function run(): void {
  const treated: Float64Array[] = [];
  const control: Float64Array[] = [];
  for (let k = 0; k < COVARIATES; k++) {
    const t = new Float64Array(PER_ARM);
    const c = new Float64Array(PER_ARM);
    const shift = k * 0.01;
    for (let i = 0; i < PER_ARM; i++) {
      t[i] = 50 + 10 * (uniform() - 0.5) + shift;
      c[i] = 50 + 10 * (uniform() - 0.5);
    }
    treated.push(t);
    control.push(c);
  }

  const plain = bestOf(() => {
    let s = 0;
    for (let k = 0; k < COVARIATES; k++) {
      const t = treated[k] as Float64Array;
      const c = control[k] as Float64Array;
      for (let i = 0; i < PER_ARM; i++) s += t[i] as number;
      for (let i = 0; i < PER_ARM; i++) s += c[i] as number;
    }
    return s;
  });
  const smd = bestOf(() => {
    let s = 0;
    for (let k = 0; k < COVARIATES; k++) s += standardizedMeanDifference(treated[k] as Float64Array, control[k] as Float64Array, { kind: 'continuous' });
    return s;
  });
  const weightsT = new Float64Array(PER_ARM).map(() => 0.5 + uniform());
  const weightsC = new Float64Array(PER_ARM).map(() => 0.5 + uniform());
  const weighted = bestOf(() => {
    let s = 0;
    for (let k = 0; k < COVARIATES; k++) {
      s += standardizedMeanDifference(treated[k] as Float64Array, control[k] as Float64Array, {
        kind: 'continuous',
        weightsTreated: weightsT,
        weightsControl: weightsC,
      });
    }
    return s;
  });

  console.log(`SMD, ${COVARIATES} continuous covariates x ${PARTICIPANTS.toLocaleString('en')} participants (2 arms, Float64Array):`);
  console.log(`  plain summing pass          ${plain.ms.toFixed(1)} ms`);
  console.log(`  unweighted SMDs             ${smd.ms.toFixed(1)} ms  (${(smd.ms / plain.ms).toFixed(2)}x the plain pass; target < 1000 ms and <= 3x)`);
  console.log(`  weighted SMDs (one weight vector per arm)  ${weighted.ms.toFixed(1)} ms  (${(weighted.ms / plain.ms).toFixed(2)}x; no target)`);

  const levels = ['I', 'II', 'III', 'IV'];
  const catT = Array.from({ length: PER_ARM }, () => levels[Math.floor(uniform() * 4)] as string);
  const catC = Array.from({ length: PER_ARM }, () => levels[Math.floor(uniform() * 4)] as string);
  const cat = bestOf(() => categoricalSmd(catT, catC));
  console.log(`  categorical SMD, 4 levels, ${PARTICIPANTS.toLocaleString('en')} participants: ${cat.ms.toFixed(1)} ms (no target)`);

  const values = control[0] as Float64Array;
  const acc = bestOf(() => {
    const a = createAccumulator();
    for (let i = 0; i < values.length; i++) a.add(values[i] as number);
    return a.variance;
  });
  const accW = bestOf(() => {
    const a = createAccumulator();
    for (let i = 0; i < values.length; i++) a.add(values[i] as number, weightsC[i] as number);
    return a.variance;
  });
  const nsPerAdd = (acc.ms * 1e6) / values.length;
  console.log(`Accumulator add: ${nsPerAdd.toFixed(1)} ns per value unweighted, ${((accW.ms * 1e6) / values.length).toFixed(1)} ns weighted (target < 1000 ns)`);
  const ok = smd.ms < 1000 && smd.ms <= 3 * plain.ms && nsPerAdd < 1000;
  console.log(`Targets ${ok ? 'met' : 'NOT met'} on this machine. (checksum ${(plain.sink + smd.sink + cat.sink + acc.sink + accW.sink + weighted.sink).toFixed(3)})`);
}
