"""Independent computation of sample quantiles and Woodruff's standard error, from raw values.

Input (stdin, JSON): {"p": [...], "z": 1.96, "arms": [{"values": [...], "groups": [...] or null}]}.
For each arm and p: the exact sample quantile (NumPy, method "inverted_cdf": the smallest value with
at least a share p at or below it), and Woodruff's (1952) interval [Q(p - z s), Q(p + z s)] from the
raw values, s the standard error of the share below the quantile: binomial sqrt(p(1-p)/n) without
groups; with groups, the random-group delta-method estimate G/(G-1) * sum_g (x_g - F y_g)^2 / n^2,
x_g the group's values at or below the quantile, y_g its values, F the share at or below it.
Output: {"numpy": version, "arms": [{"p": [...], "quantile": [...], "low": [...], "high": [...], "se": [...]}]}.
"""
import json
import sys

import numpy as np

data = json.load(sys.stdin)
z = data["z"]
out = {"numpy": np.__version__, "arms": []}
for arm in data["arms"]:
    x = np.asarray(arm["values"], dtype=float)
    n = x.size
    groups = arm.get("groups")
    res = {"p": [], "quantile": [], "low": [], "high": [], "se": [], "share_se": []}
    for p in data["p"]:
        q = float(np.quantile(x, p, method="inverted_cdf"))
        if groups is None:
            s = np.sqrt(p * (1 - p) / n)
        else:
            g = np.asarray(groups)
            below = x <= q
            f = below.mean()
            used = np.unique(g)
            ss = 0.0
            for k in used:
                sel = g == k
                ss += (below[sel].sum() - f * sel.sum()) ** 2
            s = np.sqrt(ss * used.size / (used.size - 1)) / n
        lo = float(np.quantile(x, p - z * s, method="inverted_cdf"))
        hi = float(np.quantile(x, p + z * s, method="inverted_cdf"))
        res["p"].append(p)
        res["quantile"].append(q)
        res["low"].append(lo)
        res["high"].append(hi)
        res["se"].append((hi - lo) / (2 * z))
        res["share_se"].append(float(s))
    out["arms"].append(res)
json.dump(out, sys.stdout)
