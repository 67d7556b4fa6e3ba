import { createRng, minimizationAssign } from '@counterpoise/stats';
import type { AppContext } from '../../app-context.js';
import { AppError } from '../../http/app-error.js';
import type { StudyDesign } from '../design/study-design.js';
import { blockSequence, minimizationSeed } from './allocation.service.js';

type StoredAllocationRow = { position: number; stratum_key: string; arm: string; code: string; kit_code: string; detail: { levels?: Record<string, string> } };

/**
 * Reproduces the allocation list from the stored seed, algorithm and version (ICH E6(R3)),
 * and checks every stored allocation against it. Statisticians only.
 */
export async function allocationList(ctx: AppContext, design: StudyDesign) {
  const a = design.allocation;
  if (!a || a.method === 'exposure_recorded' || !a.seed) throw new AppError('conflict', 'This study has no allocation list');
  const rows: StoredAllocationRow[] = await ctx.ds.query(
    `SELECT al.position, al.stratum_key, arm.code AS arm, p.code, al.kit_code, al.detail
       FROM allocation al JOIN arm ON arm.id = al.arm_id JOIN participant p ON p.id = al.participant_id
      WHERE al.study_id = $1 ORDER BY al.stratum_key, al.position`,
    [design.id],
  );
  const base = { method: a.method, seed: a.seed, algorithm: a.algorithm, algorithmVersion: a.algorithmVersion, rngVersion: a.rngVersion, designVersion: design.designVersion };
  if (a.method === 'permuted_blocks') {
    const byStratum = new Map<string, StoredAllocationRow[]>();
    for (const r of rows) byStratum.set(r.stratum_key, [...(byStratum.get(r.stratum_key) ?? []), r]);
    let mismatches = 0;
    const strata = [...byStratum.entries()].map(([stratumKey, used]) => {
      const n = Math.max(...used.map((u) => u.position)) + 1;
      const list = blockSequence(design, stratumKey, n);
      // Show the list to the end of the current block.
      const last = list.assignments[n - 1]!;
      const end = list.blocks[last.block]!.start + list.blocks[last.block]!.size;
      const byPos = new Map(used.map((u) => [u.position, u]));
      const assignments = list.assignments.slice(0, end).map((s) => {
        const u = byPos.get(s.sequence);
        const matches = u ? u.arm === s.arm : null;
        if (matches === false) mismatches++;
        return { position: s.sequence, block: s.block, blockSize: s.blockSize, listArm: s.arm, participantCode: u?.code ?? null, allocatedArm: u?.arm ?? null, kitCode: u?.kit_code ?? null, matches };
      });
      return { stratumKey, used: used.length, assignments };
    });
    return { ...base, blockSizes: a.blockSizes, strata, allocations: rows.length, mismatches };
  }
  // Minimization: replay every allocation in order with the counts as they stood, and compare.
  const counts: Record<string, Record<string, Record<string, number>>> = Object.fromEntries(a.factors.map((f) => [f, {}]));
  const weights = Object.fromEntries(a.factors.map((f, i) => [f, a.weights[i] ?? 1]));
  let mismatches = 0;
  const assignments = rows.map((r) => {
    const levels = r.detail.levels ?? {};
    const d = minimizationAssign({
      arms: design.arms.map((x) => x.code),
      ratio: design.arms.map((x) => x.ratio),
      factors: a.factors,
      levels,
      counts,
      weights,
      probability: a.probability,
      imbalance: a.imbalance,
      random: createRng(minimizationSeed(a.seed!, r.position)),
    });
    for (const f of a.factors) {
      const byLevel = (counts[f]![levels[f]!] ??= {});
      byLevel[r.arm] = (byLevel[r.arm] ?? 0) + 1;
    }
    const matches = d.assigned === r.arm;
    if (!matches) mismatches++;
    return { position: r.position, participantCode: r.code, kitCode: r.kit_code, levels, preferred: d.preferred, replayedArm: d.assigned, allocatedArm: r.arm, matches };
  });
  return { ...base, factors: a.factors, weights: a.weights, probability: a.probability, imbalance: a.imbalance, assignments, allocations: rows.length, mismatches };
}
