"""Reference for the command-line benchmark (bench/cli.bench.ts): two-way fixed effects with
cluster-robust (CR1) errors by unit, written with numpy only, on the same long CSV
(unit,period,outcome,treat) the command line reads. Balanced panels only: the within
transformation is x - unit mean - period mean + grand mean. The small-sample factor is
G/(G-1) * (N-1)/(N-K) with K = 1 + T (the slope, the period effects and the constant:
clusters are units, so the unit effects are nested in them).

    python3 bench/reference/twfe_numpy.py panel.csv   ->  prints "estimate se"
"""
import sys

import numpy as np


def main(path: str) -> None:
    units = np.loadtxt(path, delimiter=",", skiprows=1, usecols=0, dtype=str)
    num = np.loadtxt(path, delimiter=",", skiprows=1, usecols=(1, 2, 3), dtype=np.float64)
    unit_ids, u = np.unique(units, return_inverse=True)
    period_ids, t = np.unique(num[:, 0], return_inverse=True)
    y, x = num[:, 1], num[:, 2]
    n_units, n_periods, n = len(unit_ids), len(period_ids), len(y)
    if n != n_units * n_periods:
        raise SystemExit("the reference handles balanced panels only")

    def within(v):
        unit_mean = np.bincount(u, v, n_units) / n_periods
        period_mean = np.bincount(t, v, n_periods) / n_units
        return v - unit_mean[u] - period_mean[t] + v.mean()

    yw, xw = within(y), within(x)
    beta = (xw @ yw) / (xw @ xw)
    e = yw - beta * xw
    score = np.bincount(u, xw * e, n_units)
    bread = 1.0 / (xw @ xw)
    k = 1 + n_periods
    factor = n_units / (n_units - 1) * (n - 1) / (n - k)
    se = np.sqrt(factor * bread * (score @ score) * bread)
    print(f"{beta:.12g} {se:.12g}")


if __name__ == "__main__":
    main(sys.argv[1])
