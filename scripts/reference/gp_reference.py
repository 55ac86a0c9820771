#!/usr/bin/python3
"""Reference predictions of kriging with fixed hyperparameters.

Writes internal/surface/testdata/gp_reference.json: three data sets of our
own, their hyperparameters and, at a set of test points, the predictive mean
and standard deviation of a Gaussian process computed by scikit-learn's
GaussianProcessRegressor (optimizer=None, normalize_y=False).

Model (the one internal/surface/kriging.go documents): y_i = beta + Z(u_i) +
eps_i, Cov Z = sigma2 * r(u, u'), r the Matern 5/2 correlation of the scaled
Euclidean distance rho^2 = sum_j (u_j - u'_j)^2 / l_j^2, u the run mapped to
the unit cube by u = (x - lo)/(hi - lo), eps_i ~ N(0, se_i^2 + tau2), beta an
unknown constant. scikit-learn has no estimated trend, so beta is given a
N(0, c) prior with c = C_FACTOR * sigma2 through an added ConstantKernel(c);
as c -> infinity the posterior mean and variance of the noise-free response
tend to the generalised-least-squares (ordinary kriging) predictor and the
kriging variance that includes the trend's uncertainty (O'Hagan 1978,
"Curve fitting and optimal design for prediction", JRSS B 40; Rasmussen &
Williams 2006, "Gaussian Processes for Machine Learning", section 2.7).
alpha = se_i^2 + tau2 puts the noise into the training covariance only, so
the predicted SD is that of the noise-free mean response.

Diagnostics written beside the reference values (not used as references):
  - the Matern matrix of scikit-learn against a numpy evaluation of the
    formula (1 + s + s^2/3) exp(-s), s = sqrt(5) rho, of kriging.go, and
    against a product of one-dimensional Matern 5/2 factors (which is a
    different function, to show that the comparison can tell them apart);
  - the first-order error of the large-c approximation: with the prior
    beta ~ N(0, c), m_c(x) - m(x) = -w(x) beta_hat / (c A) and
    s_c^2(x) - s^2(x) = -w(x)^2 / (c A^2), w = 1 - 1' K^-1 k, A = 1' K^-1 1,
    and the round-off estimate eps * (sigma2 + c) / (2 s^2) of the SD;
  - the change of the predictions when c is divided by 10;
  - the difference from a direct float64 evaluation of the closed-form
    ordinary-kriging predictor with scipy.linalg.cho_solve.

Run from the repository root with Debian's interpreter (the python3-* packages
install into it): /usr/bin/python3 scripts/reference/gp_reference.py
Needs Debian's python3-sklearn, python3-scipy and python3-numpy.
"""

import datetime
import json
import math
import os
import platform
import sys

import numpy as np
import scipy
import scipy.linalg
import sklearn
from sklearn.gaussian_process import GaussianProcessRegressor
from sklearn.gaussian_process.kernels import ConstantKernel, Matern

import refjson

# c = C_FACTOR * sigma2. The large-c approximation errs by first-order terms
# in 1/(c A), A = 1' K^-1 1 (see closed_form); scikit-learn's variance
# sigma2 + c - |L^-1 k|^2 loses about eps * c / s^2 to cancellation. 1e6
# balances the two: both stay below about 2e-7 relative on these data (the
# diagnostics record the figures), where 1e8 would cost 1e-5 in the SD.
C_FACTOR = 1e6
OUT = os.path.join("internal", "surface", "testdata", "gp_reference.json")


def to_unit(x, lo, hi):
    # Same arithmetic as Bounds.toUnit: (x - lo) / (hi - lo), per column.
    return (np.asarray(x, float) - np.asarray(lo, float)) / (
        np.asarray(hi, float) - np.asarray(lo, float))


def from_unit(u, lo, hi):
    lo = np.asarray(lo, float)
    hi = np.asarray(hi, float)
    return lo + np.asarray(u, float) * (hi - lo)


def lhs_unit(perms):
    """Unit-cube points at the centres of the strata given by permutations."""
    n = len(perms[0])
    return np.array([[(p[i] + 0.5) / n for p in perms] for i in range(n)])


def datasets():
    sets = []

    # 1. One parameter, 6 runs with unequal standard errors, a small nugget.
    lo, hi = [0.5], [2.5]
    x = np.array([[0.5], [0.85], [1.2], [1.6], [2.05], [2.5]])
    f = lambda x: 0.6 + 0.4 * math.sin(2.2 * x[0]) + 0.1 * x[0] ** 2
    dev = [0.012, -0.018, 0.006, -0.009, 0.021, -0.004]
    se = [0.01, 0.02, 0.015, 0.01, 0.025, 0.02]
    xt = np.array([[0.5 + i / 6] for i in range(13)])
    sets.append(dict(name="1d-6runs", lo=lo, hi=hi, x=x, f=f, dev=dev, se=se,
                     sigma2=0.25, length=[0.3], nugget=1e-4,
                     nugget_mode="estimate", xt=xt))

    # 2. Two parameters, 12 runs of a Latin hypercube (stratum centres),
    #    standard errors per run, no nugget.
    lo, hi = [20.0, -0.1], [80.0, 0.3]
    u = lhs_unit([list(range(12)), [7, 2, 10, 5, 0, 9, 3, 11, 6, 1, 8, 4]])
    x = from_unit(u, lo, hi)

    def f2(x, lo=lo, hi=hi):
        u = to_unit(x, lo, hi)
        return (1.0 + 0.8 * math.sin(3 * u[0]) * math.cos(2 * u[1])
                + 0.5 * u[1] ** 2 - 0.3 * u[0] * u[1])

    dev = [0.03, -0.02, 0.01, -0.04, 0.02, 0.0, -0.01, 0.035, -0.025,
           0.015, -0.005, 0.02]
    se = [0.02, 0.03, 0.04, 0.05, 0.06, 0.02, 0.03, 0.04, 0.05, 0.06,
          0.025, 0.035]
    g = [0.05, 0.35, 0.65, 0.95]
    xt = from_unit(np.array([[a, b] for a in g for b in g]), lo, hi)
    sets.append(dict(name="2d-12runs", lo=lo, hi=hi, x=x, f=f2, dev=dev,
                     se=se, sigma2=0.5, length=[0.35, 0.5], nugget=0.0,
                     nugget_mode="none", xt=xt))

    # 3. Three parameters, 15 runs, no standard errors, a homoscedastic
    #    nugget only.
    lo, hi = [0.0, 100.0, 1.0], [1.0, 500.0, 3.0]
    u = lhs_unit([list(range(15)),
                  [9, 3, 14, 6, 0, 11, 4, 8, 13, 1, 7, 12, 2, 10, 5],
                  [4, 12, 7, 1, 10, 14, 2, 8, 5, 13, 0, 6, 11, 3, 9]])
    x = from_unit(u, lo, hi)

    def f3(x, lo=lo, hi=hi):
        u = to_unit(x, lo, hi)
        return (3.0 + 2.0 * math.exp(-((u[0] - 0.4) ** 2 + (u[1] - 0.6) ** 2))
                + math.cos(2.5 * u[2]) * u[0])

    dev = [0.05, -0.03, 0.02, -0.06, 0.04, 0.01, -0.02, 0.03, -0.05, 0.06,
           -0.01, 0.0, 0.02, -0.04, 0.03]
    ut = np.array([[0.1, 0.2, 0.3], [0.9, 0.8, 0.7], [0.5, 0.5, 0.5],
                   [0.0, 0.0, 0.0], [1.0, 1.0, 1.0], [0.25, 0.75, 0.5],
                   [0.75, 0.25, 0.1], [0.6, 0.9, 0.95], [0.33, 0.4, 0.05],
                   [0.8, 0.1, 0.6], [0.15, 0.95, 0.85], [0.45, 0.3, 0.65]])
    xt = from_unit(ut, lo, hi)
    sets.append(dict(name="3d-15runs", lo=lo, hi=hi, x=x, f=f3, dev=dev,
                     se=None, sigma2=4.0, length=[0.6, 0.4, 0.8],
                     nugget=0.01, nugget_mode="estimate", xt=xt))
    return sets


def matern52_scaled(ua, ub, ell):
    """kriging.go corr: q = sum d^2/l^2, s = sqrt(5 q), (1 + s + s^2/3)e^-s."""
    d = (ua[:, None, :] - ub[None, :, :]) / np.asarray(ell)
    s = np.sqrt(5 * (d ** 2).sum(-1))
    return (1 + s + s ** 2 / 3) * np.exp(-s)


def matern52_product(ua, ub, ell):
    """Product of one-dimensional Matern 5/2 correlations (not our kernel)."""
    d = np.abs(ua[:, None, :] - ub[None, :, :]) / np.asarray(ell)
    s = np.sqrt(5) * d
    return ((1 + s + s ** 2 / 3) * np.exp(-s)).prod(-1)


def sklearn_predict(u, y, noise, ut, sigma2, ell, c):
    kernel = (ConstantKernel(sigma2, "fixed")
              * Matern(length_scale=np.asarray(ell, float),
                       length_scale_bounds="fixed", nu=2.5)
              + ConstantKernel(c, "fixed"))
    gp = GaussianProcessRegressor(kernel=kernel, alpha=noise, optimizer=None,
                                  normalize_y=False, copy_X_train=True)
    gp.fit(u, y)
    return gp.predict(ut, return_std=True)


def closed_form(u, y, noise, ut, sigma2, ell):
    """Ordinary kriging, direct float64 evaluation (a diagnostic only)."""
    n = len(y)
    K = sigma2 * matern52_scaled(u, u, ell) + np.diag(noise)
    cf = scipy.linalg.cho_factor(K, lower=True)
    F = np.ones((n, 1))
    KiF = scipy.linalg.cho_solve(cf, F)
    A = F.T @ KiF
    beta = np.linalg.solve(A, KiF.T @ y)
    alpha = scipy.linalg.cho_solve(cf, y - F @ beta)
    k = sigma2 * matern52_scaled(ut, u, ell)
    mean = beta[0] + k @ alpha
    Kik = scipy.linalg.cho_solve(cf, k.T)
    w = 1 - F.T @ Kik
    var = sigma2 - np.einsum("ij,ji->i", k, Kik) + (w ** 2).ravel() / A[0, 0]
    # First-order error of the prior beta ~ N(0, c), relative.
    c = C_FACTOR * sigma2
    w = w.ravel()
    dmean = np.abs(w * beta[0] / (c * A[0, 0])) / np.abs(mean)
    dsd = 0.5 * w ** 2 / (c * A[0, 0] ** 2) / var
    roundoff = np.finfo(float).eps * (sigma2 + c) / (2 * var)
    return mean, np.sqrt(var), beta[0], dmean.max(), dsd.max(), roundoff.max()


def rel(a, b):
    return float(np.max(np.abs(np.asarray(a) - np.asarray(b)) / np.abs(b)))


def main():
    out = {
        "comment": ("Reference kriging predictions with fixed hyperparameters, "
                    "computed by scikit-learn GaussianProcessRegressor "
                    "(optimizer=None, normalize_y=False) with kernel "
                    "ConstantKernel(sigma2)*Matern(length, nu=2.5) + "
                    "ConstantKernel(c), c = %g*sigma2 standing for the unknown "
                    "constant mean, alpha = se_i^2 + nugget. Inputs x are in "
                    "natural units; the GP saw u = (x - lo)/(hi - lo)." % C_FACTOR),
        "generator": "scripts/reference/gp_reference.py",
        "date": datetime.date.today().isoformat(),
        "versions": {
            "python": platform.python_version(),
            "sklearn": sklearn.__version__,
            "scipy": scipy.__version__,
            "numpy": np.__version__,
        },
        "c_factor": C_FACTOR,
        "datasets": [],
    }
    for s in datasets():
        x = np.asarray(s["x"], float)
        y = np.array([s["f"](xi) + dv for xi, dv in zip(x, s["dev"])])
        u = to_unit(x, s["lo"], s["hi"])
        ut = to_unit(s["xt"], s["lo"], s["hi"])
        se2 = np.zeros(len(y)) if s["se"] is None else np.asarray(s["se"]) ** 2
        noise = se2 + s["nugget"]
        sigma2, ell = s["sigma2"], s["length"]
        c = C_FACTOR * sigma2

        mean, sd = sklearn_predict(u, y, noise, ut, sigma2, ell, c)
        mean10, sd10 = sklearn_predict(u, y, noise, ut, sigma2, ell, c / 10)
        cmean, csd, cbeta, dmean, dsd, roff = closed_form(u, y, noise, ut,
                                                          sigma2, ell)

        # The kernel: scikit-learn's Matern against kriging.go's formula.
        skm = Matern(length_scale=np.asarray(ell, float), nu=2.5)(ut, u)
        ours = matern52_scaled(ut, u, ell)
        prod = matern52_product(ut, u, ell)

        diag = {
            "matern_sklearn_vs_scaled_formula_max_abs": float(np.max(np.abs(skm - ours))),
            "matern_sklearn_vs_product_form_max_abs": float(np.max(np.abs(skm - prod))),
            "mean_change_c_over_10_max_rel": rel(mean10, mean),
            "sd_change_c_over_10_max_rel": rel(sd10, sd),
            "mean_vs_closed_form_max_rel": rel(mean, cmean),
            "sd_vs_closed_form_max_rel": rel(sd, csd),
            "mean_first_order_c_error_max_rel": float(dmean),
            "sd_first_order_c_error_max_rel": float(dsd),
            "sd_roundoff_estimate_max_rel": float(roff),
            "closed_form_beta": float(cbeta),
        }
        out["datasets"].append({
            "name": s["name"],
            "lo": list(map(float, s["lo"])),
            "hi": list(map(float, s["hi"])),
            "x": x.tolist(),
            "y": y.tolist(),
            "se": None if s["se"] is None else list(map(float, s["se"])),
            "sigma2": float(sigma2),
            "length": list(map(float, ell)),
            "nugget": float(s["nugget"]),
            "nugget_mode": s["nugget_mode"],
            "test_x": np.asarray(s["xt"], float).tolist(),
            "mean": mean.tolist(),
            "sd": sd.tolist(),
            "matern_test_run": skm.tolist(),
            "diagnostics": diag,
        })
        print(s["name"], json.dumps(diag), file=sys.stderr)
    refjson.dump(out, OUT)


if __name__ == "__main__":
    main()
