#!/usr/bin/env python3
"""Reference fixtures for data with a large common offset, far normal tails and t-based limits.

Computed with numpy and scipy (general-purpose reference libraries), independently of the
TypeScript code. Data near 1e9 are drawn as 1e9 + N(0, 1); the references are computed on
x - 1e9, which is exact for these doubles (Sterbenz), so they carry full precision where a
direct evaluation at the offset would not. Floats are written with repr (exact round trip).

These cases came out of an independent cross-check that found the package losing 6e-8 to 3e-7
relative at such offsets, the normal tail at 1e-13 and below, and t quantiles at ~1e-8.

Run from packages/stats:  python3 scripts/generate-offset-fixtures.py
"""
import json
import os

import numpy as np
import scipy
from scipy import stats

SEED = 20261201
OFFSET = 1e9
OUT = os.path.join(os.path.dirname(__file__), "..", "src", "__fixtures__", "balance", "offset-and-tails.json")
rng = np.random.default_rng(SEED)


def fl(a):
    return [float(x) for x in np.asarray(a, dtype=float).ravel()]


def near_offset(n, sd=1.0, shift=0.0):
    x = OFFSET + shift + rng.normal(0, sd, n)
    return x, x - OFFSET  # the second is exact


def wvar(xs, w):
    m = np.sum(w * xs) / np.sum(w)
    return np.sum(w) / (np.sum(w) ** 2 - np.sum(w**2)) * np.sum(w * (xs - m) ** 2), m


smd = []
for i in range(6):
    nT, nC = int(rng.integers(5, 60)), int(rng.integers(5, 60))
    t, ts = near_offset(nT)
    c, cs = near_offset(nC, sd=float(rng.uniform(0.5, 2)), shift=float(rng.normal(0, 0.5)))
    case = {"treated": fl(t), "control": fl(c)}
    if i % 2:
        wt, wc = rng.exponential(1, nT), rng.exponential(2, nC)
        vt, mt = wvar(ts, wt)
        vc, mc = wvar(cs, wc)
        case.update(weightsTreated=fl(wt), weightsControl=fl(wc))
    else:
        vt, mt, vc, mc = ts.var(ddof=1), ts.mean(), cs.var(ddof=1), cs.mean()
    case["smd"] = float((mt - mc) / np.sqrt((vt + vc) / 2))  # Austin 2009 / Austin & Stuart 2015
    case["varianceRatio"] = float(vt / vc)
    smd.append(case)

summaries = []
for i in range(4):
    x, xs = near_offset(int(rng.integers(8, 80)))
    summaries.append({
        "values": fl(x),
        "mean": float(OFFSET + xs.mean()),
        "variance": float(xs.var(ddof=1)),
        "skewness": float(stats.skew(xs, bias=False)),
        "excessKurtosis": float(stats.kurtosis(xs, bias=False)),
    })

accumulators = []
for i in range(3):
    x, xs = near_offset(int(rng.integers(20, 200)))
    w = rng.uniform(0.01, 10, len(x))
    v, m = wvar(xs, w)
    accumulators.append({"values": fl(x), "weights": fl(w), "mean": float(OFFSET + m), "variance": float(v)})

groups_cases = []
for i in range(4):
    k = int(rng.integers(2, 5))
    gs = [near_offset(int(rng.integers(4, 30)), sd=float(rng.uniform(0.5, 2)), shift=float(rng.normal(0, 1))) for _ in range(k)]
    raw, sh = [g[0] for g in gs], [g[1] for g in gs]
    f, p = stats.f_oneway(*sh)
    groups_cases.append({
        "groups": [fl(g) for g in raw],
        "anovaF": float(f),
        "anovaWithinSS": float(sum(np.sum((g - g.mean()) ** 2) for g in sh)),
        "leveneMean": float(stats.levene(*sh, center="mean")[0]),
        "leveneMedian": float(stats.levene(*sh, center="median")[0]),
    })

# ANCOVA confidence limits: adjusted means and slopes, t quantile on the error df (integer).
ancova_cases = []
for i in range(4):
    k, q = int(rng.integers(2, 5)), int(rng.integers(1, 3))
    labels = np.repeat(np.arange(k), rng.integers(4, 20, k))
    rng.shuffle(labels)
    n = len(labels)
    covs = {f"x{j}": rng.normal(rng.uniform(-10, 60), rng.uniform(1, 8), n) for j in range(q)}
    y = rng.normal(0, 2, n) + labels * 0.7 + sum(0.4 * c for c in covs.values())
    order = list(dict.fromkeys(labels.tolist()))
    idx = np.array([order.index(g) for g in labels])
    C = np.column_stack([c - c.mean() for c in covs.values()])
    X = np.column_stack([np.ones(n)] + [(idx == g).astype(float) for g in range(1, k)] + [C])
    b, *_ = np.linalg.lstsq(X, y, rcond=None)
    r = y - X @ b
    dfe = n - k - q
    mse = float(r @ r) / dfe
    xtxi = np.linalg.inv(X.T @ X)
    tcrit = stats.t.ppf(0.975, dfe)
    means = []
    for g in range(k):
        L = np.zeros(X.shape[1])
        L[0] = 1
        if g:
            L[g] = 1
        se = np.sqrt(mse * L @ xtxi @ L)
        means.append({"lower": float(L @ b - tcrit * se), "upper": float(L @ b + tcrit * se)})
    slopes = [{"lower": float(b[k + j] - tcrit * np.sqrt(mse * xtxi[k + j, k + j])),
               "upper": float(b[k + j] + tcrit * np.sqrt(mse * xtxi[k + j, k + j]))} for j in range(q)]
    ancova_cases.append({"outcome": fl(y), "group": [f"g{g}" for g in labels], "covariates": {kk: fl(v) for kk, v in covs.items()},
                         "errorDf": dfe, "adjustedMeans": means, "slopes": slopes})

chance = []
for k, nT, nC, thr in [(8, 313, 820, 0.5), (3, 712, 1153, 0.5), (40, 1656, 158, 0.5), (20, 400, 400, 0.3), (5, 60, 45, 0.1)]:
    se = np.sqrt(1 / nT + 1 / nC)
    p = 2 * stats.norm.sf(thr / se)
    chance.append({"covariateCount": k, "nTreated": nT, "nControl": nC, "threshold": thr,
                   "probabilityPerCovariate": float(p), "probabilityAtLeastOne": float(-np.expm1(k * np.log1p(-p)))})

# ANCOVA with the outcome at a 1e6 offset and a small group effect: references on y - 1e6
# (only the intercept depends on the shift). Drawn last so the sections above are unchanged.
ancova_offset = []
for i in range(3):
    k, q = int(rng.integers(2, 5)), int(rng.integers(1, 4))
    labels = np.repeat(np.arange(k), rng.integers(5, 25, k))
    rng.shuffle(labels)
    n = len(labels)
    covs = {f"x{j}": rng.normal(rng.uniform(-10, 60), rng.uniform(1, 8), n) for j in range(q)}
    ys = rng.normal(0, 3, n) + labels * 0.05 + sum(0.3 * c for c in covs.values())
    y = 1e6 + ys
    ys = y - 1e6  # exact
    order = list(dict.fromkeys(labels.tolist()))
    idx = np.array([order.index(g) for g in labels])
    C = np.column_stack([c - c.mean() for c in covs.values()])
    D = [(idx == g).astype(float) for g in range(1, k)]
    X = np.column_stack([np.ones(n)] + D + [C])

    def sse_of(A):
        bb, *_ = np.linalg.lstsq(A, ys, rcond=None)
        rr = ys - A @ bb
        return float(rr @ rr), bb

    sse, b = sse_of(X)
    dfe = n - k - q
    mse = sse / dfe
    sse_no_group, _ = sse_of(np.column_stack([np.ones(n), C]))
    cov_ss = {name: sse_of(np.delete(X, k + j, axis=1))[0] - sse for j, name in enumerate(covs)}
    means = [float(1e6 + b[0] + (b[g] if g else 0.0)) for g in range(k)]
    ancova_offset.append({
        "outcome": fl(y), "group": [int(g) + 1 for g in labels], "covariates": {kk: fl(v) for kk, v in covs.items()},
        "errorSS": sse, "groupSS": sse_no_group - sse, "groupF": (sse_no_group - sse) / (k - 1) / mse,
        "covariateSS": cov_ss, "slopes": fl(b[k:]), "adjustedMeans": means,
    })

payload = {
    "generator": "packages/stats/scripts/generate-offset-fixtures.py",
    "reference": f"numpy {np.__version__}, scipy {scipy.__version__}",
    "seed": SEED,
    "description": "data at a 1e9 offset (references on the exactly shifted values), far normal tails, t-based confidence limits, ANCOVA with the outcome at a 1e6 offset",
    "tolerance": {"relative": 1e-11, "absoluteFloor": 1e-12},
    "smd": smd,
    "summaries": summaries,
    "accumulators": accumulators,
    "groups": groups_cases,
    "ancova": ancova_cases,
    "chance": chance,
    "ancovaOffset": ancova_offset,
}
with open(OUT, "w") as f:
    json.dump(payload, f, indent=1)
    f.write("\n")
