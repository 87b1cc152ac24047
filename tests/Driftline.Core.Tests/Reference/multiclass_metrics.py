"""Reference values for Driftline's multiclass measures on a fixed vector.

Run with Debian 12's python3 and python3-sklearn 1.2.1 / python3-numpy 1.24.2:
    python3 multiclass_metrics.py > multiclass_metrics.json

- log_loss: sklearn.metrics.log_loss (natural log, mean over samples).
- brier (sum over classes, Brier 1950): the sum over classes of
  sklearn.metrics.brier_score_loss(y == k, p[:, k]), i.e. mean over samples of
  sum_k (p_k - [y = k])^2, range 0..2.
- top_label_ece: Guo, Pleiss, Sun & Weinberger (2017), 10 equal-width bins over the top
  label's probability, left-closed [lo, hi) with the last bin closed, weighted by bin count.
- classwise_ece: the mean over classes of the one-vs-rest ECE with the same bins
  (Kull et al. 2019, "Beyond temperature scaling").
- per class: mean predicted probability and observed rate.
- accuracy: sklearn.metrics.accuracy_score of the top label.
"""
import json

import numpy as np
from sklearn.metrics import accuracy_score, brier_score_loss, log_loss

classes = ["on-time", "late", "failed"]
p = np.array([
    [0.70, 0.20, 0.10], [0.50, 0.30, 0.20], [0.10, 0.80, 0.10], [0.33, 0.33, 0.34],
    [0.90, 0.05, 0.05], [0.20, 0.20, 0.60], [0.60, 0.35, 0.05], [0.15, 0.15, 0.70],
    [0.40, 0.45, 0.15], [0.85, 0.10, 0.05], [0.25, 0.50, 0.25], [0.05, 0.05, 0.90],
    [0.55, 0.25, 0.20], [0.30, 0.60, 0.10], [0.45, 0.10, 0.45], [0.75, 0.15, 0.10],
])
y = np.array([0, 1, 1, 2, 0, 2, 1, 0, 1, 0, 2, 2, 0, 1, 0, 0])
bins = 10
edges = np.linspace(0, 1, bins + 1)


def ece(prob, outcome):
    # Left-closed bins, the last one closed at 1.
    idx = np.minimum(np.searchsorted(edges, prob, side="right") - 1, bins - 1)
    total = 0.0
    for b in range(bins):
        m = idx == b
        if m.any():
            total += m.sum() / len(prob) * abs(prob[m].mean() - outcome[m].mean())
    return total


top = p.argmax(axis=1)
conf = p.max(axis=1)
out = {
    "classes": classes,
    "p": p.tolist(),
    "y": y.tolist(),
    "log_loss": log_loss(y, p, labels=[0, 1, 2]),
    "brier_sum": float(sum(brier_score_loss((y == k).astype(int), p[:, k]) for k in range(3))),
    "top_label_ece": ece(conf, (top == y).astype(float)),
    "classwise_ece": float(np.mean([ece(p[:, k], (y == k).astype(float)) for k in range(3)])),
    "accuracy": accuracy_score(y, top),
    "mean_confidence": float(conf.mean()),
    "mean_p": p.mean(axis=0).tolist(),
    "observed_rate": [float((y == k).mean()) for k in range(3)],
}
print(json.dumps(out, indent=2))
