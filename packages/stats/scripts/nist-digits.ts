/**
 * Prints the number of agreeing significant digits (min over all certified values of a file)
 * for the NIST StRD ANOVA and linear-regression sets, for the README. Run from the package
 * folder: npx tsx scripts/nist-digits.ts
 */
import { readFileSync } from 'node:fs';
import { leastSquares } from '../src/leastSquares/leastSquares.js';
import { oneWayAnova } from '../src/oneWayAnova/oneWayAnova.js';

const root = new URL('../src/__fixtures__/reference/', import.meta.url);
const load = <T>(p: string): T => JSON.parse(readFileSync(new URL(p, root), 'utf8')) as T;
const digits = (a: number, e: number): number => (a === e ? 16 : Math.min(16, -Math.log10(Math.abs(a - e) / Math.abs(e))));

type Anova = {
  nist_difficulty: string;
  data: Array<{ values: string[] }>;
  certified: {
    between_groups: { sum_of_squares: string; mean_square: string };
    within_groups: { sum_of_squares: string; mean_square: string };
    f_statistic: string;
    residual_sd: string;
  };
};

function exactShifted(data: Anova['data']): number[][] {
  const dec = Math.max(...data.flatMap((g) => g.values.map((v) => (v.split('.')[1] ?? '').length)));
  const scale = 10n ** BigInt(dec);
  const toScaled = (v: string): bigint => {
    const [i, f = ''] = v.split('.');
    return BigInt(i as string) * scale + BigInt(f.padEnd(dec, '0') || '0');
  };
  const s = data.map((g) => g.values.map(toScaled));
  const min = s.flat().reduce((a, b) => (b < a ? b : a));
  return s.map((g) => g.map((v) => Number(v - min) / Number(scale)));
}

function anovaDigits(r: ReturnType<typeof oneWayAnova>, c: Anova['certified']): number {
  return Math.min(
    digits(r.between.ss, Number(c.between_groups.sum_of_squares)),
    digits(r.between.ms, Number(c.between_groups.mean_square)),
    digits(r.within.ss, Number(c.within_groups.sum_of_squares)),
    digits(r.within.ms, Number(c.within_groups.mean_square)),
    digits(r.between.f, Number(c.f_statistic)),
    digits(r.residualSD, Number(c.residual_sd)),
  );
}

console.log('| NIST ANOVA | difficulty | digits, exact decimal input | digits, values parsed to double |');
console.log('|---|---|---|---|');
for (const id of ['SiRstv', 'SmLs01', 'SmLs02', 'SmLs03', 'AtmWtAg', 'SmLs04', 'SmLs05', 'SmLs06', 'SmLs07', 'SmLs08', 'SmLs09']) {
  const f = load<Anova>(`nist-anova/${id}.json`);
  const exact = anovaDigits(oneWayAnova(exactShifted(f.data)), f.certified);
  const dbl = anovaDigits(oneWayAnova(f.data.map((g) => g.values.map(Number))), f.certified);
  console.log(`| ${id} | ${f.nist_difficulty} | ${exact.toFixed(1)} | ${dbl.toFixed(1)} |`);
}

type Lin = { id: string; nist_difficulty: string; intercept_in_model: boolean; columns: string[]; data: string[][]; certified: { parameters: Array<{ estimate: string; standard_deviation: string }>; residual_sd: string } };
const degree: Record<string, number> = { Pontius: 2, Filip: 10, Wampler1: 5, Wampler2: 5, Wampler3: 5, Wampler4: 5, Wampler5: 5 };
console.log('\n| NIST linear regression | difficulty | digits, estimates | digits, SDs | digits, residual SD |');
console.log('|---|---|---|---|---|');
for (const id of ['Norris', 'Pontius', 'NoInt1', 'NoInt2', 'Filip', 'Longley', 'Wampler1', 'Wampler2', 'Wampler3', 'Wampler4', 'Wampler5']) {
  const f = load<Lin>(`nist-linreg/${id}.json`);
  const n = f.data.length;
  const cols: number[][] = [];
  const deg = degree[id];
  if (deg !== undefined) for (let k = 0; k <= deg; k++) cols.push(f.data.map((r) => Number(r[1]) ** k));
  else {
    if (f.intercept_in_model) cols.push(f.data.map(() => 1));
    for (let j = 1; j < f.columns.length; j++) cols.push(f.data.map((r) => Number(r[j])));
  }
  const x = new Float64Array(n * cols.length);
  cols.forEach((c, j) => c.forEach((v, i) => (x[j * n + i] = v)));
  const fit = leastSquares({ x, n, p: cols.length, y: f.data.map((r) => Number(r[0])) });
  const est = Math.min(...f.certified.parameters.map((p, j) => digits(fit.coefficients[j] as number, Number(p.estimate))));
  const exactFit = Number(f.certified.residual_sd) === 0;
  const sd = exactFit
    ? `SD <= ${Math.max(...Array.from(fit.standardErrors)).toExponential(1)} (certified 0)`
    : Math.min(...f.certified.parameters.map((p, j) => digits(fit.standardErrors[j] as number, Number(p.standard_deviation)))).toFixed(1);
  const rsd = exactFit ? `${fit.residualSD.toExponential(1)} (certified 0)` : digits(fit.residualSD, Number(f.certified.residual_sd)).toFixed(1);
  console.log(`| ${id} | ${f.nist_difficulty} | ${est.toFixed(1)} | ${sd} | ${rsd} |`);
}
