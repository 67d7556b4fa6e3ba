#!/usr/bin/env python3
"""Reference fixtures for chiSquareIndependence and fisherExact2x2.

Reference library: scipy 1.17.1 (scipy.stats.chi2_contingency with correction=False, i.e.
Pearson's X^2 without Yates' correction; scipy.stats.fisher_exact, two-sided, less and
greater). Tables are drawn with numpy's default_rng at a pinned seed; numbers are written with
repr() (17 significant digits, round-trip exact). These are cross-checks against an
independent implementation, not published values.

Run from the package folder:  python3 scripts/generate-contingency-fixtures.py
Writes src/__fixtures__/generated/contingency-scipy.json; re-running gives an identical file.
"""
import json
import os
import sys

import numpy as np
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, '..', 'src', '__fixtures__', 'generated', 'contingency-scipy.json')
SEED = 20261202


def chi_square_cases(rng):
    cases = []
    # (rows, columns, total): small to large; some with small expected counts on purpose.
    shapes = [(2, 2, 40), (2, 2, 400), (2, 2, 25000), (2, 3, 60), (3, 2, 300), (4, 2, 120),
              (2, 5, 2000), (3, 4, 90), (5, 3, 600), (3, 3, 15), (6, 2, 80000), (2, 2, 12)]
    for rows, cols, total in shapes:
        while True:
            probs = rng.dirichlet(np.full(rows * cols, 3.0))
            table = rng.multinomial(total, probs).reshape(rows, cols)
            if (table.sum(axis=0) > 0).all() and (table.sum(axis=1) > 0).all():
                break
        res = stats.chi2_contingency(table, correction=False)
        cases.append({
            'table': table.tolist(),
            'statistic': float(res.statistic),
            'p': float(res.pvalue),
            'df': int(res.dof),
            'expected': [[float(v) for v in row] for row in res.expected_freq],
        })
    return cases


def fisher_cases(rng):
    tables = [
        [[3, 1], [1, 3]], [[5, 5], [5, 5]], [[2, 3], [3, 2]], [[10, 0], [0, 10]], [[0, 5], [5, 0]],
        [[1, 9], [11, 3]], [[2, 15], [10, 3]], [[0, 1], [1, 0]], [[1, 0], [0, 200]], [[7, 12], [0, 15]],
    ]
    # Random tables: small cells (where the test is used) and a few large ones.
    for total in [8, 15, 20, 30, 45, 60, 100, 250, 1000, 5000]:
        for _ in range(2):
            while True:
                t = rng.multinomial(total, rng.dirichlet(np.full(4, 1.5))).reshape(2, 2)
                if (t.sum(axis=0) > 0).all() and (t.sum(axis=1) > 0).all():
                    break
            tables.append(t.tolist())
    cases = []
    for t in tables:
        cases.append({
            'table': t,
            'p': float(stats.fisher_exact(t, alternative='two-sided').pvalue),
            'pLess': float(stats.fisher_exact(t, alternative='less').pvalue),
            'pGreater': float(stats.fisher_exact(t, alternative='greater').pvalue),
        })
    return cases


def main():
    rng = np.random.default_rng(SEED)
    payload = {
        'meta': {
            'generator': 'packages/stats/scripts/generate-contingency-fixtures.py',
            'python': sys.version.split()[0],
            'scipy': scipy.__version__,
            'numpy': np.__version__,
            'seed': SEED,
        },
        'chiSquare': chi_square_cases(rng),
        'fisher': fisher_cases(rng),
    }
    with open(OUT, 'w') as fh:
        json.dump(payload, fh, indent=1)
        fh.write('\n')


if __name__ == '__main__':
    main()
