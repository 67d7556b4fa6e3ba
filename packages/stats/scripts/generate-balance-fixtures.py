#!/usr/bin/env python3
"""Reference fixtures for the balance, chance-band and logistic-regression modules.

Computed with numpy and scipy (general-purpose reference libraries), independently of the
TypeScript code, from synthetic data drawn with a pinned seed. Floats are written with
Python's repr, which round-trips doubles exactly, so the fixtures hold full precision.

Run from packages/stats:  python3 scripts/generate-balance-fixtures.py
Re-running with the same numpy/scipy versions gives byte-identical files.
"""
import json
import os

import numpy as np
import scipy
from scipy import optimize, stats

SEED = 20250117
OUT = os.path.join(os.path.dirname(__file__), "..", "src", "__fixtures__", "balance")
rng = np.random.default_rng(SEED)


def header(description, tolerance):
    return {
        "generator": "packages/stats/scripts/generate-balance-fixtures.py",
        "reference": f"numpy {np.__version__}, scipy {scipy.__version__}",
        "seed": SEED,
        "description": description,
        "tolerance": tolerance,
    }


def fl(a):
    return [float(x) for x in np.asarray(a, dtype=float).ravel()]


def write(name, payload):
    with open(os.path.join(OUT, name), "w") as f:
        json.dump(payload, f, indent=1)
        f.write("\n")


# ---------------------------------------------------------------- summarize
def weighted_var(x, w):
    """Austin & Stuart (2015) weighted variance."""
    sw, sw2 = w.sum(), (w * w).sum()
    m = np.average(x, weights=w)
    return sw / (sw * sw - sw2) * np.sum(w * (x - m) ** 2)


def unweighted_summary(x):
    return {
        "n": int(x.size),
        "mean": float(np.mean(x)),
        "variance": float(np.var(x, ddof=1)),
        "sd": float(np.std(x, ddof=1)),
        "median": float(np.quantile(x, 0.5)),  # numpy default method 'linear' = type 7
        "q1": float(np.quantile(x, 0.25)),
        "q3": float(np.quantile(x, 0.75)),
        "min": float(np.min(x)),
        "max": float(np.max(x)),
        "skewness": float(stats.skew(x, bias=False)),
        "excessKurtosis": float(stats.kurtosis(x, fisher=True, bias=False)),
    }


def weighted_summary(x, w):
    m = np.average(x, weights=w)
    c = x - m
    p2 = np.sum(w * c**2) / w.sum()
    v = weighted_var(x, w)
    q = lambda p: float(np.quantile(x, p, weights=w, method="inverted_cdf"))
    return {
        "n": int(x.size),
        "mean": float(m),
        "variance": float(v),
        "sd": float(np.sqrt(v)),
        "median": q(0.5),
        "q1": q(0.25),
        "q3": q(0.75),
        "min": float(np.min(x)),
        "max": float(np.max(x)),
        "skewness": float(np.sum(w * c**3) / w.sum() / p2**1.5),
        "excessKurtosis": float(np.sum(w * c**4) / w.sum() / p2**2 - 3),
    }


summary_cases = []
for name, x in [
    ("normal n=25", rng.normal(50, 10, 25)),
    ("lognormal n=200 (right-skewed)", rng.lognormal(0, 0.8, 200)),
    ("integers 0-4 with ties n=40", rng.integers(0, 5, 40).astype(float)),
    ("n=4 (smallest with kurtosis)", rng.normal(0, 1, 4)),
    ("n=1000 uniform", rng.uniform(-3, 7, 1000)),
]:
    summary_cases.append({"name": name, "values": fl(x), "expected": unweighted_summary(x)})

weighted_summary_cases = []
for name, x, w in [
    ("normal n=30, weights U(0.2, 5)", rng.normal(10, 3, 30), rng.uniform(0.2, 5, 30)),
    ("gamma n=120, weights U(0.5, 2)", rng.gamma(2.0, 2.0, 120), rng.uniform(0.5, 2, 120)),
]:
    weighted_summary_cases.append(
        {"name": name, "values": fl(x), "weights": fl(w), "expected": weighted_summary(x, w)}
    )

# Integer weights: weighted moment ratios equal the biased g1/g2 of the replicated data.
xr = rng.normal(0, 2, 15)
wr = rng.integers(1, 5, 15)
rep = np.repeat(xr, wr)
replicated = {
    "name": "integer weights = replication, n=15",
    "values": fl(xr),
    "weights": fl(wr),
    "expected": {
        "mean": float(np.mean(rep)),
        "skewness": float(stats.skew(rep, bias=True)),
        "excessKurtosis": float(stats.kurtosis(rep, fisher=True, bias=True)),
        "median": float(np.quantile(rep, 0.5, method="inverted_cdf")),
    },
}

write(
    "summarize.json",
    {
        **header(
            "summarize: numpy mean/var(ddof=1)/quantile(linear), scipy.stats.skew/kurtosis(bias=False); "
            "weighted: np.average, Austin & Stuart variance, np.quantile(weights, inverted_cdf), weighted moment ratios",
            {"relative": 1e-12, "absoluteFloor": 1e-12},
        ),
        "unweighted": summary_cases,
        "weighted": weighted_summary_cases,
        "replicated": replicated,
    },
)

# ---------------------------------------------------------------- SMD and variance ratio
def smd_cont(t, c, wt=None, wc=None):
    wt = np.ones_like(t) if wt is None else wt
    wc = np.ones_like(c) if wc is None else wc
    mt, mc = np.average(t, weights=wt), np.average(c, weights=wc)
    return float((mt - mc) / np.sqrt((weighted_var(t, wt) + weighted_var(c, wc)) / 2))


def smd_bin(t, c, wt=None, wc=None):
    pt = np.average(t, weights=wt)
    pc = np.average(c, weights=wc)
    return float((pt - pc) / np.sqrt((pt * (1 - pt) + pc * (1 - pc)) / 2))


smd_cases = []
for i, (nt, nc, shift, scale) in enumerate([(30, 30, 0.3, 1.0), (120, 80, -0.1, 1.5), (7, 11, 1.0, 0.5), (500, 500, 0.02, 1.0)]):
    t = rng.normal(40 + shift * 8, 8, nt)
    c = rng.normal(40, 8 * scale, nc)
    smd_cases.append(
        {
            "name": f"continuous {nt} vs {nc}",
            "kind": "continuous",
            "treated": fl(t),
            "control": fl(c),
            "smd": smd_cont(t, c),
            "varianceRatio": float(np.var(t, ddof=1) / np.var(c, ddof=1)),
        }
    )
for nt, nc, pt, pc in [(40, 40, 0.3, 0.45), (200, 150, 0.6, 0.55), (9, 13, 0.5, 0.2)]:
    t = rng.binomial(1, pt, nt).astype(float)
    c = rng.binomial(1, pc, nc).astype(float)
    smd_cases.append({"name": f"binary {nt} vs {nc}", "kind": "binary", "treated": fl(t), "control": fl(c), "smd": smd_bin(t, c)})
for nt, nc in [(50, 70), (15, 12)]:
    t = rng.normal(1, 2, nt)
    c = rng.normal(0.5, 2.5, nc)
    wt = rng.uniform(0.3, 4, nt)
    wc = rng.uniform(0.3, 4, nc)
    smd_cases.append(
        {
            "name": f"weighted continuous {nt} vs {nc}",
            "kind": "continuous",
            "treated": fl(t),
            "control": fl(c),
            "weightsTreated": fl(wt),
            "weightsControl": fl(wc),
            "smd": smd_cont(t, c, wt, wc),
            "varianceRatio": float(weighted_var(t, wt) / weighted_var(c, wc)),
        }
    )
t = rng.binomial(1, 0.4, 60).astype(float)
c = rng.binomial(1, 0.3, 80).astype(float)
wt = rng.uniform(0.3, 4, 60)
wc = rng.uniform(0.3, 4, 80)
smd_cases.append(
    {
        "name": "weighted binary 60 vs 80",
        "kind": "binary",
        "treated": fl(t),
        "control": fl(c),
        "weightsTreated": fl(wt),
        "weightsControl": fl(wc),
        "smd": smd_bin(t, c, wt, wc),
    }
)
write(
    "smd.json",
    {
        **header(
            "standardizedMeanDifference (Austin 2009; weighted: Austin & Stuart 2015) and varianceRatio, "
            "computed with numpy average/var from the published formulas",
            {"relative": 1e-12, "absoluteFloor": 1e-14},
        ),
        "cases": smd_cases,
    },
)

# ---------------------------------------------------------------- categorical SMD
def cat_smd(t, c, levels, wt=None, wc=None):
    wt = np.ones(len(t)) if wt is None else wt
    wc = np.ones(len(c)) if wc is None else wc
    kept = levels[1:]
    pt = np.array([wt[t == l].sum() / wt.sum() for l in kept])
    pc = np.array([wc[c == l].sum() / wc.sum() for l in kept])
    st = np.diag(pt) - np.outer(pt, pt)  # multinomial covariance: off-diagonals -p_k p_l
    sc = np.diag(pc) - np.outer(pc, pc)
    s = (st + sc) / 2
    d = pt - pc
    return float(np.sqrt(d @ np.linalg.solve(s, d)))


cat_cases = []
for name, levels, nt, nc, prob_t, prob_c, weighted in [
    ("3 levels 40 vs 45", ["a", "b", "c"], 40, 45, [0.2, 0.5, 0.3], [0.3, 0.4, 0.3], False),
    ("4 levels 150 vs 150", ["I", "II", "III", "IV"], 150, 150, [0.1, 0.2, 0.3, 0.4], [0.25, 0.25, 0.25, 0.25], False),
    ("5 levels 80 vs 60", ["e1", "e2", "e3", "e4", "e5"], 80, 60, [0.1, 0.1, 0.2, 0.3, 0.3], [0.2, 0.2, 0.2, 0.2, 0.2], False),
    ("2 levels 50 vs 50", ["no", "yes"], 50, 50, [0.6, 0.4], [0.45, 0.55], False),
    ("weighted 3 levels 70 vs 90", ["x", "y", "z"], 70, 90, [0.5, 0.3, 0.2], [0.4, 0.3, 0.3], True),
]:
    t = rng.choice(levels, size=nt, p=prob_t)
    c = rng.choice(levels, size=nc, p=prob_c)
    wt = rng.uniform(0.3, 4, nt) if weighted else None
    wc = rng.uniform(0.3, 4, nc) if weighted else None
    present = sorted(set(t) | set(c))  # same sorted order as the TypeScript (strings, code-unit order)
    case = {"name": name, "treated": [str(v) for v in t], "control": [str(v) for v in c], "smd": cat_smd(t, c, present, wt, wc)}
    if weighted:
        case["weightsTreated"] = fl(wt)
        case["weightsControl"] = fl(wc)
    cat_cases.append(case)
write(
    "categorical-smd.json",
    {
        **header(
            "categoricalSmd: Mahalanobis SMD over K-1 level proportions with multinomial covariance "
            "diag(p) - p p' per arm, S = (S_T + S_C)/2, solved with numpy.linalg.solve",
            {"relative": 1e-11, "absoluteFloor": 1e-14},
        ),
        "cases": cat_cases,
    },
)

# ---------------------------------------------------------------- chance band
chance = []
for nt, nc, level, threshold in [(50, 50, 0.95, 0.1), (800, 800, 0.95, 0.1), (20, 35, 0.9, 0.2), (1000, 250, 0.99, 0.05), (3, 4, 0.8, 0.5)]:
    se = np.sqrt(1 / nt + 1 / nc)
    z = stats.norm.ppf((1 + level) / 2)
    chance.append(
        {
            "nTreated": nt,
            "nControl": nc,
            "level": level,
            "threshold": threshold,
            "se": float(se),
            "z": float(z),
            "halfWidth": float(z * se),
            "probabilityPerCovariate": float(2 * stats.norm.sf(threshold / se)),
        }
    )
write(
    "chance-band.json",
    {
        **header(
            "smdChanceBand / expectedChanceExceedances: se = sqrt(1/nT + 1/nC), scipy.stats.norm.ppf and norm.sf",
            {"relative": 1e-9, "absoluteFloor": 1e-15},
        ),
        "cases": chance,
    },
)

# ---------------------------------------------------------------- logistic regression
def fit_logistic(X, y):
    Xd = np.column_stack([np.ones(len(y)), X])

    def nll(b):
        eta = Xd @ b
        return float(np.sum(np.logaddexp(0, eta) - y * eta))

    def grad(b):
        p = 1 / (1 + np.exp(-(Xd @ b)))
        return Xd.T @ (p - y)

    def hess(b):
        p = 1 / (1 + np.exp(-(Xd @ b)))
        return (Xd * (p * (1 - p))[:, None]).T @ Xd

    res = optimize.minimize(nll, np.zeros(Xd.shape[1]), jac=grad, hess=hess, method="Newton-CG", options={"xtol": 1e-14})
    assert res.success and np.max(np.abs(grad(res.x))) < 1e-7, res.message
    b = res.x
    cov = np.linalg.inv(hess(b))
    p = 1 / (1 + np.exp(-(Xd @ b)))
    return b, np.sqrt(np.diag(cov)), p, -res.fun


logit_cases = []
for name, n, beta in [
    ("n=300, 3 covariates", 300, [-0.5, 0.8, -0.4, 0.25]),
    ("n=60, 1 covariate", 60, [0.3, 1.1]),
    ("n=2000, 5 covariates (propensity-like)", 2000, [-1.0, 0.5, 0.5, -0.3, 0.2, 0.1]),
]:
    k = len(beta) - 1
    X = rng.normal(0, 1, (n, k))
    eta = beta[0] + X @ np.array(beta[1:])
    y = (rng.uniform(size=n) < 1 / (1 + np.exp(-eta))).astype(float)
    b, se, p, ll = fit_logistic(X, y)
    logit_cases.append(
        {
            "name": name,
            "X": [fl(row) for row in X],
            "y": fl(y),
            "coefficients": fl(b),
            "standardErrors": fl(se),
            "fitted": fl(p),
            "logLikelihood": float(ll),
        }
    )
write(
    "logistic-regression.json",
    {
        **header(
            "logisticRegression: maximum likelihood by scipy.optimize.minimize(Newton-CG, xtol 1e-14, gradient checked < 1e-7) with analytic "
            "gradient and Hessian; SEs from the inverse Hessian at the optimum (numpy.linalg.inv)",
            {"relative": 1e-9, "absoluteFloor": 1e-12},
        ),
        "cases": logit_cases,
    },
)
print("fixtures written to", os.path.normpath(OUT))
