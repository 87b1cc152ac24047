"""Reference values for the online log-odds recalibration (Driftline.Core.Recalibration).

Writes recalibration_fit.csv (p, y: a model's probability and the outcome) and
recalibration_fit.json: maximum-likelihood fits of y ~ a + b * logit(p) by statsmodels,
unweighted and with the forgetting weights 2^(-(n-1-i)/500) of a 500-label half-life.

Run with Debian 12's packages: apt-get install python3-statsmodels python3-numpy
    /usr/bin/python3 recalibration_fit.py
"""
import json

import numpy as np
import statsmodels
import statsmodels.api as sm

rng = np.random.default_rng(20261202)
n = 5000
# The model's own log-odds, and outcomes drawn from a miscalibrated truth:
# the true log-odds are 0.4 + 0.6 * the model's (over-confident and under-predicting).
z = rng.normal(-0.5, 1.6, n)
p = 1.0 / (1.0 + np.exp(-z))
p = np.round(p, 6)
p = np.clip(p, 1e-6, 1 - 1e-6)
zr = np.log(p) - np.log1p(-p)
truth = 1.0 / (1.0 + np.exp(-(0.4 + 0.6 * zr)))
y = (rng.random(n) < truth).astype(int)

X = sm.add_constant(zr)
plain = sm.Logit(y, X).fit(method="newton", tol=1e-12, disp=0)
weights = 2.0 ** (-(n - 1 - np.arange(n)) / 500.0)
forgotten = sm.GLM(y, X, family=sm.families.Binomial(), var_weights=weights).fit(tol=1e-12)

with open("recalibration_fit.csv", "w") as f:
    f.write("p,y\n")
    for pi, yi in zip(p, y):
        f.write(f"{pi:.6f},{yi}\n")

out = {
    "source": f"statsmodels {statsmodels.__version__} Logit (Newton) and GLM Binomial with var_weights, numpy {np.__version__}",
    "rows": n,
    "truth": {"intercept": 0.4, "slope": 0.6},
    "unweighted": {"intercept": plain.params[0], "slope": plain.params[1],
                   "se_intercept": plain.bse[0], "se_slope": plain.bse[1]},
    "half_life_500": {"intercept": forgotten.params[0], "slope": forgotten.params[1],
                      "se_intercept": forgotten.bse[0], "se_slope": forgotten.bse[1]},
}
with open("recalibration_fit.json", "w") as f:
    json.dump(out, f, indent=2)
    f.write("\n")
print(json.dumps(out, indent=2))
