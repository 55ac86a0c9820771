#!/usr/bin/python3
"""Reference weighted least-squares fit of a full quadratic in two parameters.

Writes internal/surface/testdata/wls_reference.json: 18 runs of our own with
a standard error per run, and the coefficients and standard errors of

    y = b0 + b1 x1 + b2 x2 + b3 x1 x2 + b4 x1^2 + b5 x2^2

(in natural units, the term order of surface.QuadraticTerms) fitted with
weights w_i = 1/se_i^2.

Coefficients: scipy.linalg.lstsq (LAPACK gelsd, an SVD) on the weighted
design A = diag(1/se) X and response diag(1/se) y.

Standard errors, two definitions, both written:
  - "se_scaled": sqrt(s2 * diag((A'A)^-1)) with s2 = sum(r_i^2)/(n - p),
    r = A b - diag(1/se) y: the covariance scaled by the residual variance
    (the reduced chi-square), which is what surface.Poly reports (its model
    is e_i ~ N(0, sigma^2/w_i) with sigma^2 estimated from the residuals);
  - "se_unscaled": sqrt(diag((A'A)^-1)): the covariance when the se_i are
    taken as exact (scipy.optimize.curve_fit with absolute_sigma=True).
(A'A)^-1 is formed from the thin SVD of A, V diag(1/s^2) V', never from the
normal equations. As a check, scipy.optimize.curve_fit (absolute_sigma=False,
method "lm") is run on the same model; its agreement is written under
"diagnostics" (it is iterative, so it is not the reference).

Run from the repository root with Debian's interpreter (the python3-* packages
install into it): /usr/bin/python3 scripts/reference/wls_reference.py
Needs Debian's python3-scipy and python3-numpy.
"""

import datetime
import json
import os
import platform

import numpy as np
import scipy
import scipy.linalg
import scipy.optimize

import refjson

OUT = os.path.join("internal", "surface", "testdata", "wls_reference.json")

LO, HI = [2.0, -5.0], [8.0, 15.0]
X = [
    # 3 x 3 factorial on the corners, edge mid-points and centre
    [2.0, -5.0], [5.0, -5.0], [8.0, -5.0],
    [2.0, 5.0], [5.0, 5.0], [8.0, 5.0],
    [2.0, 15.0], [5.0, 15.0], [8.0, 15.0],
    # interior points
    [3.5, 0.0], [6.5, 0.0], [3.5, 10.0], [6.5, 10.0],
    [4.25, 12.5], [7.25, -2.5],
    # replicated centre
    [5.0, 5.0], [5.0, 5.0],
    # one more off-grid run
    [2.75, 7.5],
]
SE = [0.010, 0.015, 0.020, 0.012, 0.008, 0.018, 0.025, 0.014, 0.030,
      0.011, 0.016, 0.013, 0.022, 0.019, 0.017, 0.009, 0.010, 0.021]
# deviations from the smooth function, about one standard error each
DEV = [0.8, -1.1, 0.4, -0.6, 1.3, -0.2, 0.9, -1.4, 0.5,
       -0.7, 1.0, 0.1, -1.2, 0.6, -0.3, 1.1, -0.9, 0.2]
TRUE = [1.2, 0.05, -0.02, 0.003, 0.01, 0.0015]
TERMS = ["1", "x1", "x2", "x1*x2", "x1^2", "x2^2"]


def design(x):
    x = np.asarray(x, float)
    x1, x2 = x[:, 0], x[:, 1]
    return np.column_stack([np.ones(len(x)), x1, x2, x1 * x2, x1 ** 2, x2 ** 2])


def main():
    x = np.asarray(X, float)
    se = np.asarray(SE, float)
    D = design(x)
    y = D @ np.asarray(TRUE) + np.asarray(DEV) * se
    n, p = D.shape

    A = D / se[:, None]
    b = y / se
    coef, _, rank, sv = scipy.linalg.lstsq(A, b)
    assert rank == p
    r = A @ coef - b
    s2 = float(r @ r) / (n - p)
    _, sing, vt = scipy.linalg.svd(A, full_matrices=False)
    cov = (vt.T / sing ** 2) @ vt
    se_unscaled = np.sqrt(np.diag(cov))
    se_scaled = np.sqrt(s2) * se_unscaled

    # Check: curve_fit on the same linear model.
    def model(xx, *beta):
        return design(xx.T) @ np.asarray(beta)

    cf, cfcov = scipy.optimize.curve_fit(model, x.T, y, p0=np.zeros(p),
                                         sigma=se, absolute_sigma=False,
                                         xtol=1e-15, ftol=1e-15, gtol=1e-15)
    # A first-order bound on the componentwise relative error of a backward
    # stable least-squares solver (Golub & Van Loan 2013, thm 5.3.1, applied
    # to the column-equilibrated design, with g_t = b_t |A_t|):
    # eps kappa (|g| / |g_t|) (2 + kappa |r| / (|A| |g|)).
    colnorm = np.sqrt((A ** 2).sum(0))
    kappa = np.linalg.cond(A / colnorm)
    g = coef * colnorm
    anorm = np.linalg.norm(A / colnorm, 2)
    bound = (np.finfo(float).eps * kappa * np.linalg.norm(g) / np.abs(g)
             * (2 + kappa * np.linalg.norm(r) / (anorm * np.linalg.norm(g))))
    diag = {
        "curve_fit_coef_max_rel": float(np.max(np.abs(cf - coef) / np.abs(coef))),
        "curve_fit_se_max_rel": float(np.max(np.abs(np.sqrt(np.diag(cfcov)) - se_scaled) / se_scaled)),
        "cond_weighted_design": float(sing[0] / sing[-1]),
        "cond_weighted_design_unit_columns": float(np.linalg.cond(A / colnorm)),
        "coef_forward_error_bound_max_rel": float(bound.max()),
        "coef_over_se_min": float(np.min(np.abs(coef) / se_scaled)),
    }
    out = {
        "comment": ("Weighted least squares (w_i = 1/se_i^2) of a full quadratic "
                    "in two parameters, natural units; coefficients by "
                    "scipy.linalg.lstsq on the weighted design, standard errors "
                    "from its thin SVD, scaled by the residual variance "
                    "(se_scaled) and not (se_unscaled)."),
        "generator": "scripts/reference/wls_reference.py",
        "date": datetime.date.today().isoformat(),
        "versions": {
            "python": platform.python_version(),
            "scipy": scipy.__version__,
            "numpy": np.__version__,
        },
        "lo": LO,
        "hi": HI,
        "terms": TERMS,
        "x": x.tolist(),
        "y": y.tolist(),
        "se": se.tolist(),
        "coef": coef.tolist(),
        "se_scaled": se_scaled.tolist(),
        "se_unscaled": se_unscaled.tolist(),
        "reduced_chi2": s2,
        "dof": n - p,
        "diagnostics": diag,
    }
    print(json.dumps(diag))
    refjson.dump(out, OUT)


if __name__ == "__main__":
    main()
