"""Delta-method variance of a ratio of means, computed independently with NumPy.

Reads JSON {"arms": [{"x": [...], "y": [...]}, ...]} on stdin and writes, per arm, the ratio
x̄/ȳ and Var(x̄/ȳ) by the formula of Deng, Knoblich & Lu (2018, KDD):
    Var(X̄/Ȳ) ≈ (σx²/μy² − 2 μx σxy/μy³ + μx² σy²/μy⁴) / n
with the sample (n − 1) variances and covariance, plus the Welch t statistic of the difference of
the first two arms' ratios and its Welch–Satterthwaite degrees of freedom.
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
json.dump(out, sys.stdout)
