"""Delta-method variance of a ratio of means, computed independently with NumPy.

Reads JSON {"arms": [{"x": [...], "y": [...]}, ...]} on stdin and writes, per arm, the ratio
x̄/ȳ and Var(x̄/ȳ) by the formula of Deng, Knoblich & Lu (2018, KDD):
    Var(X̄/Ȳ) ≈ (σx²/μy² − 2 μx σxy/μy³ + μx² σy²/μy⁴) / n
with the sample (n − 1) variances and covariance, plus the Welch t statistic of the difference of
the first two arms' ratios and its Welch–Satterthwaite degrees of freedom. Also the statistic under
no change: every unit linearised at the common ratio R0 = Σx/Σy of both arms, d = x − R0·y, the
within-arm sums of squares of d pooled on n_a + n_b − 2 degrees of freedom and divided by the
squared mean denominator of both arms; and the interval's Welch t with each arm's per-unit variance
(n·Var(x̄/ȳ)) at least that pooled one.
"""
import json
import sys

import numpy as np

data = json.load(sys.stdin)
out = {"numpy": np.__version__, "arms": []}
variances = []
ns = []
ratios = []
for arm in data["arms"]:
    x = np.asarray(arm["x"], dtype=float)
    y = np.asarray(arm["y"], dtype=float)
    n = x.size
    mx, my = x.mean(), y.mean()
    cov = np.cov(np.vstack([x, y]), ddof=1)
    sxx, syy, sxy = cov[0, 0], cov[1, 1], cov[0, 1]
    var = (sxx / my**2 - 2 * mx * sxy / my**3 + mx**2 * syy / my**4) / n
    out["arms"].append({"ratio": mx / my, "variance": var})
    variances.append(var)
    ns.append(n)
    ratios.append(mx / my)
va, vb = variances[0], variances[1]
out["t"] = (ratios[0] - ratios[1]) / np.sqrt(va + vb)
out["df"] = (va + vb) ** 2 / (va**2 / (ns[0] - 1) + vb**2 / (ns[1] - 1))
xa, ya = (np.asarray(data["arms"][0][k], dtype=float) for k in ("x", "y"))
xb, yb = (np.asarray(data["arms"][1][k], dtype=float) for k in ("x", "y"))
r0 = (xa.sum() + xb.sum()) / (ya.sum() + yb.sum())
da, db = xa - r0 * ya, xb - r0 * yb
ss = ((da - da.mean()) ** 2).sum() + ((db - db.mean()) ** 2).sum()
na, nb = xa.size, xb.size
ybar = (ya.sum() + yb.sum()) / (na + nb)
se0 = np.sqrt(ss / (na + nb - 2) / ybar**2 * (1 / na + 1 / nb))
out["t_pooled"] = (ratios[0] - ratios[1]) / se0
per_unit = se0**2 / (1 / na + 1 / nb)
fa, fb = max(va * na, per_unit) / na, max(vb * nb, per_unit) / nb
out["se_floored"] = np.sqrt(fa + fb)
out["df_floored"] = (fa + fb) ** 2 / (fa**2 / (na - 1) + fb**2 / (nb - 1))
json.dump(out, sys.stdout)
