"""Repeated stratified k-fold cross-validation of an unpenalised logistic regression on
anes96.csv (label: voted for the challenger), by scikit-learn, on fixed folds stored beside
the figures so Driftline's cross-validation can be run on exactly the same splits.

Run with Debian 12's /usr/bin/python3 (python3-sklearn 1.2.1, python3-numpy 1.24.2):
    /usr/bin/python3 cross_validation.py > cross_validation.json
"""
import json

import numpy as np
import sklearn
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import accuracy_score, brier_score_loss, log_loss, roc_auc_score
from sklearn.model_selection import RepeatedStratifiedKFold, cross_val_score

FEATURES = ["popul", "TVnews", "selfLR", "ClinLR", "DoleLR", "PID", "age", "educ", "income"]
FOLDS, REPEATS, SEED = 10, 10, 20261202

data = np.genfromtxt("anes96.csv", delimiter=",", names=True)
X = np.column_stack([data[f] for f in FEATURES])
y = data["label"].astype(int)


def ece(p, y, bins=10):
    # Equal-width bins, left-closed, the last closed at 1 (numpy.searchsorted side='right' on
    # the inner edges): sum over bins of n_b / N * |mean p_b - mean y_b| (Naeini et al. 2015).
    edges = np.linspace(0.0, 1.0, bins + 1)
    index = np.searchsorted(edges[1:-1], p, side="right")
    total = 0.0
    for b in range(bins):
        mask = index == b
        if mask.any():
            total += mask.sum() / len(p) * abs(p[mask].mean() - y[mask].mean())
    return float(total)


def metrics(p, y):
    return {
        "log_loss": float(log_loss(y, p, labels=[0, 1])),
        "brier": float(brier_score_loss(y, p)),
        "ece": ece(p, y),
        "auc": float(roc_auc_score(y, p)) if 0 < y.sum() < len(y) else None,
        "accuracy": float(accuracy_score(y, (p > 0.5).astype(int))),
    }


def model():
    return LogisticRegression(penalty=None, solver="newton-cholesky", tol=1e-12, max_iter=1000)


splitter = RepeatedStratifiedKFold(n_splits=FOLDS, n_repeats=REPEATS, random_state=SEED)
assignment = np.full((REPEATS, len(y)), -1)
folds = []
for split, (train, test) in enumerate(splitter.split(X, y)):
    repeat, fold = divmod(split, FOLDS)
    assignment[repeat, test] = fold
    fitted = model().fit(X[train], y[train])
    p = fitted.predict_proba(X[test])[:, 1]
    # The class prior of the training fold with Laplace's correction, (n_1 + 1) / (N + 2).
    prior = (y[train].sum() + 1.0) / (len(train) + 2.0)
    row = {"repeat": repeat, "fold": fold, "n": int(len(test))}
    row.update(metrics(p, y[test]))
    row["prior"] = metrics(np.full(len(test), prior), y[test])
    folds.append(row)

scores = {
    name: cross_val_score(model(), X, y, cv=RepeatedStratifiedKFold(n_splits=FOLDS, n_repeats=REPEATS, random_state=SEED), scoring=scoring)
    for name, scoring in [("accuracy", "accuracy"), ("neg_log_loss", "neg_log_loss")]
}


def summary(key, prior=False):
    values = np.array([(f["prior"] if prior else f)[key] for f in folds], dtype=float)
    per_repeat = values.reshape(REPEATS, FOLDS).mean(axis=1)
    return {"mean": float(values.mean()), "sd": float(values.std(ddof=1)), "sd_of_repeat_means": float(per_repeat.std(ddof=1))}


# The multinomial logit of party identification (the model of mnlogit_anes96.json), 5 x 3 folds.
MC_FEATURES = ["logpopul", "selfLR", "age", "educ", "income"]
MC_FOLDS, MC_REPEATS = 5, 3
Xm = np.column_stack([np.log(data["popul"] + 0.1)] + [data[f] for f in MC_FEATURES[1:]])
ym = data["PID"].astype(int)
K = 7


def mc_metrics(P, y):
    onehot = np.eye(K)[y]
    top = P.argmax(axis=1)
    # Top-label (confidence) ECE (Guo et al. 2017): the most probable class's probability against whether it was right.
    return {
        "log_loss": float(log_loss(y, P, labels=list(range(K)))),
        "brier": float(((P - onehot) ** 2).sum(axis=1).mean()),
        "ece": ece(P.max(axis=1), (top == y).astype(float)),
        "accuracy": float((top == y).mean()),
    }


mc_splitter = RepeatedStratifiedKFold(n_splits=MC_FOLDS, n_repeats=MC_REPEATS, random_state=SEED)
mc_assignment = np.full((MC_REPEATS, len(ym)), -1)
mc_folds = []
for split, (train, test) in enumerate(mc_splitter.split(Xm, ym)):
    repeat, fold = divmod(split, MC_FOLDS)
    mc_assignment[repeat, test] = fold
    fitted = LogisticRegression(penalty=None, multi_class="multinomial", solver="newton-cg", tol=1e-12, max_iter=10000).fit(Xm[train], ym[train])
    P = fitted.predict_proba(Xm[test])
    counts = np.bincount(ym[train], minlength=K)
    prior = np.tile((counts + 1.0) / (len(train) + K), (len(test), 1))
    row = {"repeat": repeat, "fold": fold, "n": int(len(test))}
    row.update(mc_metrics(P, ym[test]))
    row["prior"] = mc_metrics(prior, ym[test])
    mc_folds.append(row)

multiclass = {
    "what": "5 x 3-fold stratified cross-validation of the multinomial logit of PID (7 classes) on logpopul = ln(popul + 0.1), selfLR, age, educ, income; brier summed over classes; ece top-label",
    "features": MC_FEATURES, "label": "PID", "classes": K,
    "folds": MC_FOLDS, "repeats": MC_REPEATS, "seed": SEED,
    "model": "sklearn.linear_model.LogisticRegression(penalty=None, multi_class='multinomial', solver='newton-cg', tol=1e-12)",
    "assignment": mc_assignment.tolist(),
    "per_fold": mc_folds,
}

print(json.dumps({
    "what": "10 x 10-fold stratified cross-validation of an unpenalised logistic regression of label on the nine raw features of anes96.csv; per-fold held-out metrics of the model and of the Laplace-corrected class prior of each training fold",
    "features": FEATURES,
    "folds": FOLDS, "repeats": REPEATS, "seed": SEED,
    "splitter": "sklearn.model_selection.RepeatedStratifiedKFold(n_splits=10, n_repeats=10, random_state=20261202)",
    "model": "sklearn.linear_model.LogisticRegression(penalty=None, solver='newton-cholesky', tol=1e-12)",
    "metrics": "log_loss: sklearn log_loss; brier: brier_score_loss; auc: roc_auc_score; accuracy: p > 0.5; ece: 10 equal-width left-closed bins (Naeini et al. 2015)",
    "versions": {"sklearn": sklearn.__version__, "numpy": np.__version__},
    "assignment": assignment.tolist(),
    "per_fold": folds,
    "summary": {k: summary(k) for k in ["log_loss", "brier", "ece", "auc", "accuracy"]},
    "prior_summary": {k: summary(k, True) for k in ["log_loss", "brier", "ece", "accuracy"]},
    "multiclass": multiclass,
    "cross_val_score": {"accuracy_mean": float(scores["accuracy"].mean()), "log_loss_mean": float(-scores["neg_log_loss"].mean())},
}, indent=1))
