"""Independent check of group-sequential crossing probabilities.

Reads a JSON list of designs [{"fractions": [...], "upper": [...], "lower": [...]}] on stdin and
prints, for each design, the probability of having crossed a boundary by each look:
1 - P(lower_j < Z_j < upper_j for all j <= k), with Corr(Z_i, Z_j) = sqrt(t_i / t_j) for t_i <= t_j,
computed by SciPy's general-purpose multivariate normal CDF (Genz's algorithm), not by the project.
"""
import json
import sys

import numpy as np
import scipy
from scipy.stats import multivariate_normal


def crossed_by_look(fractions, upper, lower):
    t = np.asarray(fractions, dtype=float)
    out = []
    for k in range(1, len(t) + 1):
        tk = t[:k]
        cov = np.sqrt(np.minimum.outer(tk, tk) / np.maximum.outer(tk, tk))
        up = np.asarray([np.inf if u is None else u for u in upper[:k]], dtype=float)
        lo = np.asarray([-np.inf if v is None else v for v in lower[:k]], dtype=float)
        np.random.seed(1)  # Genz's algorithm is randomised quasi-Monte Carlo: fix it for repeatability
        inside = multivariate_normal.cdf(up, mean=np.zeros(k), cov=cov, maxpts=500_000 * k,
                                         abseps=1e-8, releps=1e-8, lower_limit=lo)
        out.append(1.0 - float(inside))
    return out


def main():
    designs = json.load(sys.stdin)
    print(json.dumps({"scipy": scipy.__version__,
                      "crossed": [crossed_by_look(d["fractions"], d["upper"], d["lower"]) for d in designs]}))


if __name__ == "__main__":
    main()
