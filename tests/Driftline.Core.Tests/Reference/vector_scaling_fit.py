"""Reference values for the online vector scaling (Driftline.Core.Recalibration.VectorScaling).

Writes vector_scaling_fit.csv (p0, p1, p2: a 3-class model's probabilities; y: the observed
class) and vector_scaling_fit.json: batch fits of vector scaling (Guo, Pleiss, Sun & Weinberger
2017, "On Calibration of Modern Neural Networks"), q = softmax(b * log p + a), by maximum
likelihood with scipy.optimize:
  - "unpenalised": a_0 fixed at 0 (the a are identified only up to a common shift);
  - "prior_2": the log-likelihood minus (2/2) * ||(a, b) - (0, 1)||^2, the Gaussian pull
    towards no correction that Driftline's default Recalibration:PriorWeight of 2 adds.

Run with Debian 12's packages: apt-get install python3-scipy python3-numpy
    /usr/bin/python3 vector_scaling_fit.py
"""
import json

import numpy as np
import scipy
from scipy.optimize import minimize
from scipy.special import logsumexp

rng = np.random.default_rng(20261203)
n, k = 5000, 3
# The model's own probabilities: a softmax of random scores, rounded to 6 decimals as a file
# would carry them, then renormalised.
scores = rng.normal(0.0, 1.5, (n, k)) + np.array([0.3, 0.0, -0.3])
p = np.exp(scores - logsumexp(scores, axis=1, keepdims=True))
p = np.clip(np.round(p, 6), 1e-6, 1.0)
p = p / p.sum(axis=1, keepdims=True)
u = np.log(p)
# The truth: over-confident per class and shifted towards class 1.
a_true = np.array([0.0, 0.4, -0.2])
b_true = np.array([0.6, 0.7, 0.5])
zt = b_true * u + a_true
truth = np.exp(zt - logsumexp(zt, axis=1, keepdims=True))
y = np.array([rng.choice(k, p=row) for row in truth])


def nll(theta, prior):
    a, b = theta[:k], theta[k:]
    z = b * u + a
    lse = logsumexp(z, axis=1)
    value = np.sum(lse - z[np.arange(n), y])
    q = np.exp(z - lse[:, None])
    r = q.copy()
    r[np.arange(n), y] -= 1.0
    grad = np.concatenate([r.sum(axis=0), (r * u).sum(axis=0)])
    ident = np.concatenate([np.zeros(k), np.ones(k)])
    value += 0.5 * prior * np.sum((theta - ident) ** 2)
    grad = grad + prior * (theta - ident)
    return value, grad


def fit_prior(prior):
    x0 = np.concatenate([np.zeros(k), np.ones(k)])
    res = minimize(nll, x0, args=(prior,), jac=True, method="BFGS", options={"gtol": 1e-9, "maxiter": 10000})
    return res


def fit_unpenalised():
    # a_0 = 0: optimise (a_1..a_{k-1}, b_0..b_{k-1}).
    def f(t):
        theta = np.concatenate([[0.0], t])
        v, g = nll(theta, 0.0)
        return v, g[1:]
    x0 = np.concatenate([np.zeros(k - 1), np.ones(k)])
    res = minimize(f, x0, jac=True, method="BFGS", options={"gtol": 1e-9, "maxiter": 10000})
    res.theta = np.concatenate([[0.0], res.x])
    return res


plain = fit_unpenalised()
prior2 = fit_prior(2.0)
prior2.theta = prior2.x

with open("vector_scaling_fit.csv", "w") as f:
    f.write("p0,p1,p2,y\n")
    for row, yi in zip(p, y):
        f.write(f"{row[0]:.17g},{row[1]:.17g},{row[2]:.17g},{yi}\n")


def part(res):
    theta = res.theta
    return {"a": list(theta[:k]), "b": list(theta[k:]), "mean_log_loss": float(nll(theta, 0.0)[0] / n),
            "gradient_norm": float(np.linalg.norm(res.jac)), "optimizer_message": str(res.message)}


out = {
    "source": f"scipy {scipy.__version__} optimize.minimize (BFGS, analytic gradient, gtol 1e-9), numpy {np.__version__}",
    "rows": n,
    "classes": k,
    "truth": {"a": list(a_true), "b": list(b_true)},
    "raw_mean_log_loss": float(-np.mean(u[np.arange(n), y])),
    "unpenalised": part(plain),
    "prior_2": part(prior2),
}
with open("vector_scaling_fit.json", "w") as f:
    json.dump(out, f, indent=2)
    f.write("\n")
print(json.dumps(out, indent=2))
