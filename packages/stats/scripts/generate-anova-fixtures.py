#!/usr/bin/env python3
"""Reference fixtures for the ANOVA / ANCOVA / Levene / Shapiro-Wilk / distribution modules.

Reference libraries: scipy 1.17.1 and numpy 2.x (scipy.stats.f_oneway, levene, shapiro and the
f, t, norm, chi2 distributions; numpy.linalg.lstsq for ANCOVA by explicit extra-sum-of-squares
formulas, since statsmodels is not available). Python's fractions module gives the exact
rational ANOVA of the NIST SmLs data *as stored in IEEE doubles*.

Seeds are pinned; numbers are written with repr() (17 significant digits, round-trip exact).
Run from the package folder:  python3 scripts/generate-anova-fixtures.py
Writes src/__fixtures__/generated/*.json. These are cross-checks against independent
implementations, not published values.
"""
import json
import os
import sys
from fractions import Fraction

import numpy as np
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, '..', 'src', '__fixtures__', 'generated')
REF = os.path.join(HERE, '..', 'src', '__fixtures__', 'reference')
META = {
    'generator': 'packages/stats/scripts/generate-anova-fixtures.py',
    'python': sys.version.split()[0],
    'scipy': scipy.__version__,
    'numpy': np.__version__,
}


def write(name, payload):
    payload = {'meta': META, **payload}
    with open(os.path.join(OUT, name), 'w') as fh:
        json.dump(payload, fh, indent=1)
        fh.write('\n')


def floats(a):
    return [float(v) for v in a]


# ---------------------------------------------------------------- NIST ANOVA, exact on doubles
def nist_double_exact():
    out = {}
    for name in ['SiRstv'] + ['SmLs0%d' % i for i in range(1, 10)] + ['AtmWtAg']:
        with open(os.path.join(REF, 'nist-anova', name + '.json')) as fh:
            d = json.load(fh)
        groups = [[Fraction(float(v)) for v in g['values']] for g in d['data']]
        allv = [v for g in groups for v in g]
        n = len(allv)
        grand = sum(allv, Fraction(0)) / n
        means = [sum(g, Fraction(0)) / len(g) for g in groups]
        ssb = sum(len(g) * (m - grand) ** 2 for g, m in zip(groups, means))
        ssw = sum(sum((v - m) ** 2 for v in g) for g, m in zip(groups, means))
        k = len(groups)
        out[name] = {
            'between_ss': float(ssb), 'within_ss': float(ssw),
            'f': float((ssb / (k - 1)) / (ssw / (n - k))),
        }
    write('nist-anova-double-exact.json', {
        'description': 'Exact rational one-way ANOVA of the NIST StRD ANOVA data after each decimal value is '
                       'parsed to the nearest IEEE double (what any double-precision program receives). '
                       'Derived with Python fractions; not a published value. Separates the algorithm\'s '
                       'rounding error from the representation error of the inputs.',
        'cases': out,
    })


# ---------------------------------------------------------------- one-way ANOVA vs scipy
def anova_cases():
    rng = np.random.default_rng(20240601)
    cases = []
    specs = [(2, [5, 7]), (3, [10, 10, 10]), (4, [3, 8, 15, 40]), (5, [200, 150, 180, 220, 190])]
    for k, sizes in specs:
        for offset in [0.0, 1e6]:
            groups = [rng.normal(offset + 0.3 * i, 1 + 0.2 * i, size=s) for i, s in enumerate(sizes)]
            res = stats.f_oneway(*groups)
            cases.append({'groups': [floats(g) for g in groups], 'f': float(res.statistic), 'p': float(res.pvalue)})
    write('one-way-anova-scipy.json', {'description': 'scipy.stats.f_oneway on generated normal data', 'cases': cases})


# ---------------------------------------------------------------- Levene / Brown-Forsythe vs scipy
def levene_cases():
    rng = np.random.default_rng(20240602)
    cases = []
    for sizes in [[6, 6], [5, 9, 12], [20, 25, 30, 18], [7, 3, 11, 15, 9]]:
        groups = [rng.gamma(2.0 + i, 1.0 + 0.5 * i, size=s) for i, s in enumerate(sizes)]
        for center in ['mean', 'median']:
            res = stats.levene(*groups, center=center)
            cases.append({'groups': [floats(g) for g in groups], 'center': center,
                          'statistic': float(res.statistic), 'p': float(res.pvalue)})
    write('levene-scipy.json', {'description': 'scipy.stats.levene (center mean = Levene 1960, median = Brown-Forsythe 1974)', 'cases': cases})


# ---------------------------------------------------------------- Shapiro-Wilk vs scipy
def shapiro_cases():
    rng = np.random.default_rng(20240603)
    cases = []
    for n in [3, 4, 5, 6, 7, 10, 11, 12, 20, 35, 50, 100, 500, 2000, 5000]:
        for dist in ['normal', 'exponential', 'uniform']:
            if dist == 'normal':
                x = rng.normal(10, 2, size=n)
            elif dist == 'exponential':
                x = rng.exponential(1.5, size=n)
            else:
                x = rng.uniform(-1, 1, size=n)
            res = stats.shapiro(x)
            cases.append({'n': n, 'distribution': dist, 'values': floats(x),
                          'w': float(res.statistic), 'p': float(res.pvalue)})
    write('shapiro-wilk-scipy.json', {'description': 'scipy.stats.shapiro (a port of Royston AS R94) on generated data', 'cases': cases})


# ---------------------------------------------------------------- distributions vs scipy
def distribution_cases():
    f_cases = [[f, d1, d2, float(stats.f.sf(f, d1, d2))] for f, d1, d2 in
               [(0.5, 1, 10), (2.61064341880123, 2, 11), (9.59, 2, 12), (59.48, 2, 11), (1.2, 8, 18000), (3.0, 2, 999994), (25.0, 3, 40)]]
    t_cases = [[t, df, float(2 * stats.t.sf(abs(t), df))] for t, df in [(0.3, 3), (2.0, 11), (8.36476989833756, 11), (2.0, 500000), (-4.5, 30)]]
    tq = [[p, df, float(stats.t.ppf(p, df))] for p, df in [(0.975, 1), (0.975, 3), (0.975, 11), (0.995, 30), (0.975, 1e6), (0.025, 9)]]
    nq = [[p, float(stats.norm.ppf(p))] for p in [1e-10, 0.001, 0.025, 0.5, 0.8, 0.975]]
    nc = [[z, float(stats.norm.sf(z))] for z in [-3.0, -0.5, 0.0, 1.96, 5.0, 9.0]]
    chi = [[x, k, float(stats.chi2.sf(x, k))] for x, k in [(20.785873428, 9), (3.84, 1), (50.0, 30), (0.5, 4)]]
    write('distributions-scipy.json', {'description': 'scipy.stats f.sf, 2*t.sf, t.ppf, norm.ppf, norm.sf, chi2.sf',
                                       'fUpper': f_cases, 'tTwoSided': t_cases, 'tQuantile': tq,
                                       'normalQuantile': nq, 'normalUpper': nc, 'chiSquareUpper': chi})


# ---------------------------------------------------------------- ANCOVA vs numpy lstsq
def wls(X, y, w):
    sw = np.sqrt(w)
    Xw, yw = X * sw[:, None], y * sw
    b, *_ = np.linalg.lstsq(Xw, yw, rcond=None)
    r = yw - Xw @ b
    return b, float(r @ r), Xw, yw


def ancova_reference(y, g, covs, w):
    """Explicit formulas: full model intercept + (k-1) dummies + covariates; Type III SS as extra SS."""
    levels = list(dict.fromkeys(g))
    k = len(levels)
    n = len(y)
    names = list(covs)
    D = np.column_stack([(np.array(g) == lv).astype(float) for lv in levels[1:]]) if k > 1 else np.zeros((n, 0))
    C = np.column_stack([covs[c] for c in names]) if names else np.zeros((n, 0))
    one = np.ones((n, 1))
    X = np.hstack([one, D, C])
    b, sse, Xw, _ = wls(X, y, w)
    dfe = int((w > 0).sum()) - X.shape[1]
    mse = sse / dfe
    ybar = float((w * y).sum() / w.sum())
    sst = float((w * (y - ybar) ** 2).sum())
    terms = {}
    for j, c in enumerate(names):
        Xr = np.delete(X, 1 + (k - 1) + j, axis=1)
        _, sser, _, _ = wls(Xr, y, w)
        ss = sser - sse
        terms[c] = {'df': 1, 'ss': ss, 'f': ss / mse, 'p': float(stats.f.sf(ss / mse, 1, dfe))}
    Xr = np.hstack([one, C])
    _, sser, _, _ = wls(Xr, y, w)
    ss = sser - sse
    terms['group'] = {'df': k - 1, 'ss': ss, 'f': ss / (k - 1) / mse, 'p': float(stats.f.sf(ss / (k - 1) / mse, k - 1, dfe))}
    # Type I: covariates in key order, then group
    type1 = {}
    prev = float((w * (y - ybar) ** 2).sum())
    for j, c in enumerate(names):
        Xs = np.hstack([one, C[:, : j + 1]])
        _, s, _, _ = wls(Xs, y, w)
        type1[c] = prev - s
        prev = s
    type1['group'] = prev - sse
    _, Rw = np.linalg.qr(Xw)
    Ri = np.linalg.inv(Rw)
    XtXi = Ri @ Ri.T  # (X'X)^-1 from the R factor: avoids squaring the condition number
    cbar = (w[:, None] * C).sum(axis=0) / w.sum() if names else np.zeros(0)
    Ls = {}
    for i, lv in enumerate(levels):
        L = np.zeros(X.shape[1])
        L[0] = 1
        if i > 0:
            L[i] = 1
        L[1 + (k - 1):] = cbar
        Ls[lv] = L
    tcrit = float(stats.t.ppf(0.975, dfe))
    adj = []
    for lv in levels:
        L = Ls[lv]
        m = float(L @ b)
        se = float(np.sqrt(mse * L @ XtXi @ L))
        adj.append({'group': lv, 'mean': m, 'se': se, 'lower': m - tcrit * se, 'upper': m + tcrit * se})
    # HC3
    sw = np.sqrt(w)
    e = (y - X @ b) * sw
    h = np.einsum('ij,jk,ik->i', Xw, XtXi, Xw)
    omega = e ** 2 / (1 - h) ** 2
    V3 = XtXi @ (Xw.T * omega) @ Xw @ XtXi
    pair = []
    for i in range(k):
        for j in range(i + 1, k):
            c = Ls[levels[i]] - Ls[levels[j]]
            d = float(c @ b)
            se = float(np.sqrt(mse * c @ XtXi @ c))
            t = d / se
            pair.append({'a': levels[i], 'b': levels[j], 'difference': d, 'se': se, 't': t,
                         'p': float(2 * stats.t.sf(abs(t), dfe)), 'lower': d - tcrit * se, 'upper': d + tcrit * se,
                         'hc3Se': float(np.sqrt(c @ V3 @ c))})
    slopes = [{'covariate': c, 'estimate': float(b[1 + (k - 1) + j]),
               'se': float(np.sqrt(mse * XtXi[1 + (k - 1) + j, 1 + (k - 1) + j]))} for j, c in enumerate(names)]
    idx = list(range(1, k))
    bT = b[idx]
    VT = V3[np.ix_(idx, idx)]
    wald = float(bT @ np.linalg.solve(VT, bT) / (k - 1))
    # slope homogeneity: add dummy x covariate interactions
    inter = [D[:, a] * C[:, j] for j in range(len(names)) for a in range(k - 1)]
    homog = None
    if names:
        Xf = np.hstack([X, np.column_stack(inter)])
        _, ssef, _, _ = wls(Xf, y, w)
        df1 = (k - 1) * len(names)
        df2 = int((w > 0).sum()) - Xf.shape[1]
        fh = ((sse - ssef) / df1) / (ssef / df2)
        homog = {'f': fh, 'df1': df1, 'df2': df2, 'p': float(stats.f.sf(fh, df1, df2)), 'separateSlopesSSE': ssef}
    return {
        'levels': levels, 'error': {'df': dfe, 'ss': sse, 'ms': mse}, 'totalSS': sst, 'rSquared': 1 - sse / sst,
        'terms': terms, 'typeI': type1, 'adjustedMeans': adj, 'pairwise': pair, 'slopes': slopes,
        'hc3GroupWaldF': wald, 'slopeHomogeneity': homog,
    }


def ancova_cases():
    rng = np.random.default_rng(20240604)
    cases = []
    specs = [
        ('two arms, one covariate', ['T', 'C'], [12, 15], 1, False),
        ('three groups, two covariates', ['a', 'b', 'c'], [10, 14, 9], 2, False),
        ('four groups (numeric labels), three covariates', [1, 2, 3, 4], [20, 25, 18, 30], 3, False),
        ('three groups, two covariates, weighted', ['x', 'y', 'z'], [15, 12, 20], 2, True),
        ('two arms, three covariates, large offset', ['T', 'C'], [40, 45], 3, False),
    ]
    for label, levels, sizes, q, weighted in specs:
        g = [lv for lv, s in zip(levels, sizes) for _ in range(s)]
        n = len(g)
        perm = rng.permutation(n)
        g = [g[i] for i in perm]
        covs = {}
        offset = 1e4 if 'offset' in label else 0.0
        for j in range(q):
            covs['cov%d' % (j + 1)] = offset + rng.normal(50 + 5 * j, 10, size=n)
        gi = np.array([levels.index(v) for v in g])
        y = 5 + 0.8 * gi + sum((0.3 + 0.2 * j) * covs['cov%d' % (j + 1)] for j in range(q)) + rng.normal(0, 2 + 0.5 * gi, size=n)
        w = rng.uniform(0.5, 2.0, size=n) if weighted else np.ones(n)
        ref = ancova_reference(y, g, covs, w)
        cases.append({'label': label, 'outcome': floats(y), 'group': g, 'covariates': {c: floats(v) for c, v in covs.items()},
                      'weights': floats(w) if weighted else None, 'expected': ref})
    write('ancova-numpy.json', {
        'description': 'ANCOVA by explicit formulas with numpy.linalg.lstsq: Type III SS as extra sums of squares '
                       '(drop the term, refit), Type I in order covariates then group, adjusted means at the '
                       '(weighted) covariate means with SE sqrt(MSE L\'(X\'X)^-1 L), HC3 = (X\'X)^-1 X\' diag(e^2/(1-h)^2) X (X\'X)^-1, '
                       'slope homogeneity by adding group dummy x covariate columns. Weighted cases scale rows by sqrt(w).',
        'cases': cases,
    })


if __name__ == '__main__':
    os.makedirs(OUT, exist_ok=True)
    nist_double_exact()
    anova_cases()
    levene_cases()
    shapiro_cases()
    distribution_cases()
    ancova_cases()
    print('fixtures written to', os.path.normpath(OUT))
