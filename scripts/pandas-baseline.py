"""The scripted pipeline issue #8 compares thetaseek with: pandas group-by, a numpy least-squares
fit per (series, temperature), then a numpy line A2 = a + b/T per series and theta = -b/a.

It does far less than `thetaseek analyze` (one linear form, no weights, SEs, intervals, joint fit,
checks or messages); it is the straightforward way, timed for the speed ratio only.

Run: pip install numpy pandas; python3 scripts/pandas-baseline.py campaign.csv OUT_DIR
Prints the wall time in seconds (reading, fitting and writing two CSV files) on stdout.
"""

import sys
import time

import numpy as np
import pandas as pd

# J/(mol K): R = N_A k, exact since the 2019 SI redefinition (SI brochure, 9th edition);
# the same value as thetaseek's units::GAS_CONSTANT_J_PER_MOL_K.
GAS_CONSTANT = 8.31446261815324


def virial_fit(group):
    c = group["c"].to_numpy()  # g/L = kg/m^3
    y = group["reduced"].to_numpy()  # mol/kg
    design = np.column_stack([np.ones_like(c), c])
    beta = np.linalg.lstsq(design, y, rcond=None)[0]
    return pd.Series({"mn_g_per_mol": 1e3 / beta[0], "a2_mol_ml_per_g2": beta[1]})


def theta_fit(group):
    x = 1.0 / group["t"].to_numpy()
    design = np.column_stack([np.ones_like(x), x])
    a, b = np.linalg.lstsq(design, group["a2_mol_ml_per_g2"].to_numpy(), rcond=None)[0]
    return -b / a


def main():
    path, out = sys.argv[1], sys.argv[2]
    start = time.perf_counter()
    frame = pd.read_csv(path, comment="#")
    frame.columns = ["series", "t", "c", "p"]
    frame["reduced"] = frame["p"] / (frame["c"] * GAS_CONSTANT * frame["t"])
    fits = frame.groupby(["series", "t"]).apply(virial_fit).reset_index()
    theta = fits.groupby("series").apply(theta_fit).rename("theta_k")
    fits.to_csv(f"{out}/pandas-fits.csv", index=False)
    theta.to_csv(f"{out}/pandas-theta.csv")
    print(f"{time.perf_counter() - start:.3f}")


if __name__ == "__main__":
    main()
