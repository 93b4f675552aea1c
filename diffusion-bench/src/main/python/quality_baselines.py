#!/usr/bin/env python3
"""Classical models on the fixed split of the open tables, for Backstep's quality benchmark.

Every figure here is computed on the split and in the space of SOURCES.md (the project's shared
data notes, copied beside the CSVs): row i (0-based, file order) is a test row when i % 5 == 0, a
training row otherwise; continuous columns are standardized by the training rows' mean and
population standard deviation; negative log-likelihoods are in nats per record in that space.
Binary columns (digits_binary) are used as they are.

Model selection (component counts, bandwidth multiples) uses a validation fold of the training
rows: the training rows at positions j (0-based, among the training rows) with j % 5 == 0 are
held out, the models are fitted on the other training rows, the setting with the best validation
log-likelihood wins, and the chosen model is fitted again on all training rows.

Models (scikit-learn, NumPy and SciPy; the Bernoulli mixture's EM is written here):
  gaussian         one full-covariance Gaussian, maximum likelihood
  mixture          Gaussian mixture with full covariances (sklearn GaussianMixture, reg_covar
                   1e-6, 3 starts), components from {1, 2, 4, 8, 16} on the validation fold
  copula_gaussian  each column mapped to normal scores z = Phi^-1(F(x)) through a kernel-smoothed
                   empirical distribution function F(x) = (1/n) sum_i Phi((x - x_i) / h) of the
                   training values (Gaussian kernels, h = a multiple in {0.25, 0.5, 1, 2} of
                   Silverman's rule 0.9 min(sd, IQR / 1.34) n^(-1/5), picked on the validation
                   fold), then one Gaussian on the scores; the density keeps the exact
                   log-derivative log dz/dx = log f(x) - log phi(z), f = F' (Liu, Lafferty &
                   Wasserman 2009, "The Nonparanormal", with a smoothed instead of a winsorized
                   distribution function)
  copula_mixture   the same scores, a Gaussian mixture on them (multiple and components picked
                   together on the validation fold)
  bernoulli        digits: independent Bernoulli columns, add-one smoothing
  bernoulli_mixture digits: a mixture of products of Bernoullis by EM (add-one smoothing of each
                   component's pixel probabilities), components from {1, 4, 16, 32, 64, 128}

Imputation: 20% of the test rows' cells hidden at random (numpy default_rng(MASK_SEED), chosen
without replacement), each hidden cell filled with the mean of its exact conditional distribution
given the row's observed cells, and a central 90% interval from that conditional (for a mixture:
the mixture of the components' conditionals, weighted by each component's density of the observed
cells; for the copula forms: computed on the scores and mapped back, the mean by 40-point
Gauss-Hermite quadrature, the map back by linear interpolation on a 4,001-point grid of each
column, about 0.01 sd apart). RMSE over the hidden cells in standardized units; for digits the RMSE
of P(x = 1) against the 0/1 truth (no interval).

Anomaly ranks (SOURCES.md, "Labelled anomalies"): fit on the normal training rows only (standardized
by those rows), score the held-out normal rows and the anomalous rows; AUROC, and the recall of
anomalies at thresholds set at the 99th and 95th percentile (linear interpolation) of the held-out
normal rows' scores. The anomalous rows are all rows of the anomalous class (none is trained on);
the figures on the anomalous test rows only are given too. Detectors: Mahalanobis distance under
one Gaussian (pseudo-inverse covariance), the mixture's negative log-likelihood (Gaussian, or
Bernoulli for digits), the copula forms (breast_cancer), an isolation forest (sklearn, 200 trees,
random_state 0), the distance to the 5th nearest training row (Euclidean).

Prints one JSON object on stdout; progress on stderr.
"""
import argparse
import csv
import json
import math
import sys
import time

import numpy as np
from scipy import special
from sklearn.ensemble import IsolationForest
from sklearn.metrics import roc_auc_score
from sklearn.mixture import GaussianMixture
from sklearn.neighbors import NearestNeighbors

TEST_EVERY = 5
VALIDATION_EVERY = 5
MASK_SEED = 20091
GRID = 4001
HIDDEN_SHARE = 0.2
LEVEL = 0.9
COMPONENTS = [1, 2, 4, 8, 16]
BERNOULLI_COMPONENTS = [1, 4, 16, 32, 64, 128]
BANDWIDTH_MULTIPLES = [0.25, 0.5, 1.0, 2.0]
GMM_STARTS = 3
SEED = 0
LOG_2PI = math.log(2 * math.pi)


def log(msg):
    print(msg, file=sys.stderr, flush=True)


def read_csv(path):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    return rows[0], np.array([[float(v) for v in r] for r in rows[1:]])


# ------------------------------------------------------------------ one Gaussian

class Gaussian:
    """Maximum-likelihood Gaussian: mean and population covariance."""

    def __init__(self, x):
        self.mean = x.mean(axis=0)
        d = x - self.mean
        self.cov = d.T @ d / len(x)

    def log_density(self, x):
        return gaussian_log_density(x, self.mean, self.cov)

    def as_mixture(self):
        return np.ones(1), self.mean[None, :], self.cov[None, :, :]


def gaussian_log_density(x, mean, cov):
    chol = np.linalg.cholesky(cov)
    sol = np.linalg.solve(chol, (x - mean).T)
    return -0.5 * (sol ** 2).sum(axis=0) - np.log(np.diag(chol)).sum() - 0.5 * x.shape[1] * LOG_2PI


def validation_split(n):
    j = np.arange(n)
    return j % VALIDATION_EVERY != 0, j % VALIDATION_EVERY == 0


def fit_mixture(x, k):
    return GaussianMixture(n_components=k, covariance_type="full", n_init=GMM_STARTS, random_state=SEED).fit(x)


def choose_components(x):
    fit_rows, val_rows = validation_split(len(x))
    scores = {}
    for k in COMPONENTS:
        if k * 2 > fit_rows.sum():
            break
        scores[k] = fit_mixture(x[fit_rows], k).score(x[val_rows])
    return max(scores, key=scores.get), scores


def mixture_parts(gm):
    return gm.weights_, gm.means_, gm.covariances_


# ------------------------------------------------------------------ normal scores

class NormalScores:
    """Per column z = Phi^-1(F(x)), F the kernel-smoothed empirical distribution of the knots."""

    def __init__(self, x, multiple):
        self.knots = [np.sort(x[:, j]) for j in range(x.shape[1])]
        self.h = np.array([multiple * silverman(k) for k in self.knots])
        self.grids = {}

    def _parts(self, j, v):
        u = (v[:, None] - self.knots[j][None, :]) / self.h[j]
        n = len(self.knots[j])
        log_lo = special.logsumexp(special.log_ndtr(u), axis=1) - math.log(n)
        log_hi = special.logsumexp(special.log_ndtr(-u), axis=1) - math.log(n)
        log_f = special.logsumexp(-0.5 * u * u, axis=1) - 0.5 * LOG_2PI - math.log(n * self.h[j])
        z = np.where(log_lo <= log_hi, special.ndtri_exp(np.minimum(log_lo, 0.0)),
                     -special.ndtri_exp(np.minimum(log_hi, 0.0)))
        return z, log_f

    def forward(self, x):
        """Scores and the per-row log-Jacobian sum_j log dz_j/dx_j."""
        z = np.empty_like(x)
        lj = np.zeros(len(x))
        for j in range(x.shape[1]):
            z[:, j], log_f = self._parts(j, x[:, j])
            lj += log_f - (-0.5 * z[:, j] ** 2 - 0.5 * LOG_2PI)
        return z, lj

    def inverse(self, j, z):
        """x with forward(x)_j = z: linear interpolation on a grid of GRID points from min - 10 h to
        max + 10 h (spacing about 0.01 sd on these tables), bisection outside it; z a 1-D array."""
        if j not in self.grids:
            k, h = self.knots[j], self.h[j]
            xs = np.linspace(k[0] - 10 * h, k[-1] + 10 * h, GRID)
            self.grids[j] = (self._parts(j, xs)[0], xs)
        zs, xs = self.grids[j]
        x = np.interp(z, zs, xs)
        outside = (z < zs[0]) | (z > zs[-1])
        if outside.any():
            x[outside] = self._bisect(j, z[outside])
        return x

    def _bisect(self, j, z):
        k, h = self.knots[j], self.h[j]
        lo = np.full(z.shape, k[0] - 10 * h)
        hi = np.full(z.shape, k[-1] + 10 * h)
        for _ in range(200):
            zl, _ = self._parts(j, lo)
            zh, _ = self._parts(j, hi)
            bad_lo, bad_hi = zl > z, zh < z
            if not bad_lo.any() and not bad_hi.any():
                break
            lo = np.where(bad_lo, lo - 2 * (hi - lo), lo)
            hi = np.where(bad_hi, hi + 2 * (hi - lo), hi)
        for _ in range(80):
            mid = 0.5 * (lo + hi)
            zm, _ = self._parts(j, mid)
            below = zm < z
            lo = np.where(below, mid, lo)
            hi = np.where(below, hi, mid)
        return 0.5 * (lo + hi)


def silverman(v):
    sd = v.std()
    iqr = np.subtract(*np.percentile(v, [75, 25]))
    spread = min(sd, iqr / 1.34) if iqr > 0 else sd
    return 0.9 * spread * len(v) ** (-0.2)


class Copula:
    """Normal scores of each column, then one Gaussian (k = 0) or a mixture of k on the scores."""

    def __init__(self, x, multiple, k):
        self.multiple, self.k = multiple, k
        self.scores = NormalScores(x, multiple)
        z, _ = self.scores.forward(x)
        self.inner = Gaussian(z) if k == 0 else fit_mixture(z, k)

    def log_density(self, x):
        z, lj = self.scores.forward(x)
        inner = self.inner.log_density(z) if self.k == 0 else self.inner.score_samples(z)
        return inner + lj

    def parts(self):
        return self.inner.as_mixture() if self.k == 0 else mixture_parts(self.inner)


def choose_copula(x, mixture):
    fit_rows, val_rows = validation_split(len(x))
    scores = {}
    for m in BANDWIDTH_MULTIPLES:
        for k in (COMPONENTS if mixture else [0]):
            if k * 2 > fit_rows.sum():
                break
            scores[(m, k)] = Copula(x[fit_rows], m, k).log_density(x[val_rows]).mean()
    return max(scores, key=scores.get)


# ------------------------------------------------------------------ Bernoulli products

class BernoulliMixture:
    """sum_k pi_k prod_j p_kj^x_j (1 - p_kj)^(1 - x_j) by EM; p_kj = (sum_i r_ik x_ij + 1) / (sum_i r_ik + 2)."""

    def __init__(self, x, k, iterations=300, tol=1e-7):
        rng = np.random.default_rng(SEED)
        n = len(x)
        r = rng.dirichlet(np.ones(k), size=n)
        previous = -np.inf
        for _ in range(iterations):
            nk = r.sum(axis=0)
            with np.errstate(divide="ignore"):  # an emptied component gets weight 0
                self.log_pi = np.log(nk / n)
            self.p = (r.T @ x + 1.0) / (nk[:, None] + 2.0)
            joint = self._joint(x)
            ll = special.logsumexp(joint, axis=1)
            r = np.exp(joint - ll[:, None])
            if ll.mean() - previous < tol:
                break
            previous = ll.mean()

    def _joint(self, x):
        return self.log_pi[None, :] + x @ np.log(self.p).T + (1 - x) @ np.log1p(-self.p).T

    def log_density(self, x):
        return special.logsumexp(self._joint(x), axis=1)

    def conditional_one(self, x, observed):
        """P(x_j = 1 | the observed cells of each row), for every cell."""
        xo = np.where(observed, x, 0.0)
        joint = (self.log_pi[None, :] + xo @ np.log(self.p).T
                 + (observed * (1 - np.nan_to_num(x))) @ np.log1p(-self.p).T)
        w = np.exp(joint - special.logsumexp(joint, axis=1)[:, None])
        return w @ self.p


def choose_bernoulli(x):
    fit_rows, val_rows = validation_split(len(x))
    scores = {k: BernoulliMixture(x[fit_rows], k).log_density(x[val_rows]).mean() for k in BERNOULLI_COMPONENTS}
    return max(scores, key=scores.get), scores


# ------------------------------------------------------------------ imputation

HERMITE_X, HERMITE_W = np.polynomial.hermite_e.hermegauss(40)
HERMITE_W = HERMITE_W / HERMITE_W.sum()


def conditional_cells(weights, means, covs, row, hidden):
    """Per hidden cell of one row, the 1-D mixture (w, mu, sd) of its conditional given the observed cells."""
    obs = ~hidden
    logw, mus, sds = [], [], []
    for w, m, c in zip(weights, means, covs):
        if obs.any():
            coo = c[np.ix_(obs, obs)]
            cmo = c[np.ix_(hidden, obs)]
            gain = np.linalg.solve(coo, cmo.T).T
            mu = m[hidden] + gain @ (row[obs] - m[obs])
            cov = c[np.ix_(hidden, hidden)] - gain @ cmo.T
            lw = math.log(w) + gaussian_log_density(row[obs][None, :], m[obs], coo)[0]
        else:
            mu, cov, lw = m[hidden], c[np.ix_(hidden, hidden)], math.log(w)
        logw.append(lw)
        mus.append(mu)
        sds.append(np.sqrt(np.maximum(np.diag(cov), 1e-300)))
    logw = np.array(logw)
    w = np.exp(logw - special.logsumexp(logw))
    return w, np.array(mus), np.array(sds)


def mixture_quantile(w, mu, sd, q):
    lo, hi = (mu - 12 * sd).min(), (mu + 12 * sd).max()
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        if (w * special.ndtr((mid - mu) / sd)).sum() < q:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def impute(parts, x, hidden, scores=None):
    """Means and 90% intervals of every hidden cell, in the space of x (scores: copula map or None)."""
    weights, means, covs = parts
    if scores is None:
        z = np.where(hidden, 0.0, x)
    else:  # per-column maps: the observed cells' scores do not depend on the hidden ones
        z_all, _ = scores.forward(np.where(hidden, np.nanmean(x, axis=0), x))
        z = np.where(hidden, 0.0, z_all)
    mean = np.full(x.shape, np.nan)
    lower = np.full(x.shape, np.nan)
    upper = np.full(x.shape, np.nan)
    for r in np.nonzero(hidden.any(axis=1))[0]:
        w, mu, sd = conditional_cells(weights, means, covs, z[r], hidden[r])
        for i, j in enumerate(np.nonzero(hidden[r])[0]):
            ql = mixture_quantile(w, mu[:, i], sd[:, i], (1 - LEVEL) / 2)
            qu = mixture_quantile(w, mu[:, i], sd[:, i], (1 + LEVEL) / 2)
            if scores is None:
                mean[r, j] = (w * mu[:, i]).sum()
                lower[r, j], upper[r, j] = ql, qu
            else:
                nodes = (mu[:, i][:, None] + sd[:, i][:, None] * HERMITE_X[None, :]).ravel()
                back = scores.inverse(j, nodes).reshape(len(w), -1)
                mean[r, j] = (w[:, None] * HERMITE_W[None, :] * back).sum()
                lower[r, j], upper[r, j] = scores.inverse(j, np.array([ql, qu]))
    return mean, lower, upper


def imputation_figures(mean, lower, upper, truth, hidden):
    err = (mean - truth)[hidden]
    out = {"rmse": float(np.sqrt((err ** 2).mean()))}
    if lower is not None:
        inside = (lower[hidden] <= truth[hidden]) & (truth[hidden] <= upper[hidden])
        out["coverage"] = float(inside.mean())
        out["expected_coverage"] = LEVEL
    return out


# ------------------------------------------------------------------ anomaly ranks

def anomaly_figures(scores_normal, scores_anomalous):
    y = np.r_[np.zeros(len(scores_normal)), np.ones(len(scores_anomalous))]
    s = np.r_[scores_normal, scores_anomalous]
    out = {"auroc": float(roc_auc_score(y, s))}
    for q in (99, 95):
        threshold = np.quantile(scores_normal, q / 100)
        out[f"recall_at_{q}"] = float((scores_anomalous > threshold).mean())
    return out


def knn_distance(train, x, k, exclude_self=False):
    nn = NearestNeighbors(n_neighbors=k + (1 if exclude_self else 0)).fit(train)
    d, _ = nn.kneighbors(x)
    return d[:, -1]


# ------------------------------------------------------------------ the tables

def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t0


def standardize(train, *others):
    m, s = train.mean(axis=0), train.std(axis=0)
    s = np.where(s > 0, s, 1.0)
    return [(a - m) / s for a in (train,) + others], m, s


def continuous_table(name, x):
    n = len(x)
    test = np.arange(n) % TEST_EVERY == 0
    (tr, te), _, _ = standardize(x[~test], x[test])
    out = {"rows": n, "columns": x.shape[1], "train_rows": int(len(tr)), "test_rows": int(len(te)), "density": {}}
    dens = out["density"]

    g, sec = timed(lambda: Gaussian(tr))
    dens["gaussian"] = {"nats": float(-g.log_density(te).mean()), "seconds": sec}
    log(f"{name}: one Gaussian {dens['gaussian']['nats']:.3f}")

    (k, val), sec = timed(lambda: choose_components(tr))
    gm, sec2 = timed(lambda: fit_mixture(tr, k))
    dens["mixture"] = {"nats": float(-gm.score(te)), "components": k, "seconds": sec + sec2,
                       "validation_nats": {str(c): -v for c, v in val.items()}}
    log(f"{name}: mixture ({k}) {dens['mixture']['nats']:.3f}")

    copulas = {}
    for label, mixture in (("copula_gaussian", False), ("copula_mixture", True)):
        (m, kc), sec = timed(lambda: choose_copula(tr, mixture))
        cop, sec2 = timed(lambda: Copula(tr, m, kc))
        copulas[label] = cop
        dens[label] = {"nats": float(-cop.log_density(te).mean()), "bandwidth_multiple": m, "seconds": sec + sec2}
        if mixture:
            dens[label]["components"] = kc
        log(f"{name}: {label} (multiple {m}, k {kc}) {dens[label]['nats']:.3f}")

    # imputation
    rng = np.random.default_rng(MASK_SEED)
    cells = te.size
    chosen = rng.choice(cells, size=int(round(HIDDEN_SHARE * cells)), replace=False)
    hidden = np.zeros(te.shape, dtype=bool)
    hidden.flat[chosen] = True
    imp = {"seed": MASK_SEED, "share": HIDDEN_SHARE, "level": LEVEL,
           "hidden": [[int(r), int(c)] for r, c in zip(*np.nonzero(hidden))], "models": {}}
    masked = np.where(hidden, np.nan, te)
    for label, parts, scores in (("gaussian", g.as_mixture(), None), ("mixture", mixture_parts(gm), None),
                                 ("copula_gaussian", copulas["copula_gaussian"].parts(), copulas["copula_gaussian"].scores),
                                 ("copula_mixture", copulas["copula_mixture"].parts(), copulas["copula_mixture"].scores)):
        (mean, lower, upper), sec = timed(lambda: impute(parts, masked, hidden, scores))
        imp["models"][label] = imputation_figures(mean, lower, upper, te, hidden) | {"seconds": sec}
        log(f"{name}: imputation {label} rmse {imp['models'][label]['rmse']:.3f} "
            f"coverage {imp['models'][label]['coverage']:.3f}")
    out["imputation"] = imp
    return out


def breast_cancer_anomalies(x, labels):
    n = len(x)
    test = np.arange(n) % TEST_EVERY == 0
    normal = labels == 0
    (tr, te_normal, anomalous), _, _ = standardize(x[~test & normal], x[test & normal], x[~normal])
    anomalous_test = (test[~normal])
    det = {}

    def record(label, fn, sec):
        sn, sa = fn(te_normal), fn(anomalous)
        det[label] = anomaly_figures(sn, sa) | {"test_only": anomaly_figures(sn, sa[anomalous_test]), "seconds": sec}
        log(f"breast_cancer anomalies: {label} AUROC {det[label]['auroc']:.4f}")

    g, sec = timed(lambda: Gaussian(tr))
    prec = np.linalg.pinv(g.cov)
    record("mahalanobis", lambda v: np.einsum("ij,jk,ik->i", v - g.mean, prec, v - g.mean), sec)
    (k, _), sec = timed(lambda: choose_components(tr))
    gm, sec2 = timed(lambda: fit_mixture(tr, k))
    record(f"mixture", lambda v: -gm.score_samples(v), sec + sec2)
    det["mixture"]["components"] = k
    for label, mixture in (("copula_gaussian", False), ("copula_mixture", True)):
        (m, kc), sec = timed(lambda: choose_copula(tr, mixture))
        cop, sec2 = timed(lambda: Copula(tr, m, kc))
        record(label, lambda v: -cop.log_density(v), sec + sec2)
    iso, sec = timed(lambda: IsolationForest(n_estimators=200, random_state=SEED).fit(tr))
    record("isolation_forest", lambda v: -iso.score_samples(v), sec)
    record("knn5", lambda v: knn_distance(tr, v, 5), 0.0)
    return {"normal": "benign (label 0)", "anomalous": "malignant (label 1)", "train_rows": int(len(tr)),
            "normal_test_rows": int(len(te_normal)), "anomalous_rows": int(len(anomalous)),
            "anomalous_test_rows": int(anomalous_test.sum()), "detectors": det}


def digits_table(x, labels):
    n = len(x)
    test = np.arange(n) % TEST_EVERY == 0
    tr, te = x[~test], x[test]
    out = {"rows": n, "columns": x.shape[1], "train_rows": int(len(tr)), "test_rows": int(len(te)), "density": {}}
    p, sec = timed(lambda: (tr.sum(axis=0) + 1) / (len(tr) + 2))
    indep = -(te @ np.log(p) + (1 - te) @ np.log1p(-p)).mean()
    out["density"]["bernoulli"] = {"nats": float(indep), "seconds": sec}
    (k, val), sec = timed(lambda: choose_bernoulli(tr))
    bm, sec2 = timed(lambda: BernoulliMixture(tr, k))
    out["density"]["bernoulli_mixture"] = {"nats": float(-bm.log_density(te).mean()), "components": k,
                                           "seconds": sec + sec2,
                                           "validation_nats": {str(c): float(-v) for c, v in val.items()}}
    log(f"digits_binary: Bernoulli {indep:.3f}, mixture ({k}) {out['density']['bernoulli_mixture']['nats']:.3f}")

    rng = np.random.default_rng(MASK_SEED)
    chosen = rng.choice(te.size, size=int(round(HIDDEN_SHARE * te.size)), replace=False)
    hidden = np.zeros(te.shape, dtype=bool)
    hidden.flat[chosen] = True
    masked = np.where(hidden, np.nan, te)
    imp = {"seed": MASK_SEED, "share": HIDDEN_SHARE, "level": LEVEL,
           "hidden": [[int(r), int(c)] for r, c in zip(*np.nonzero(hidden))], "models": {}}
    imp["models"]["bernoulli"] = imputation_figures(np.broadcast_to(p, te.shape), None, None, te, hidden)
    imp["models"]["bernoulli_mixture"] = imputation_figures(bm.conditional_one(masked, ~hidden), None, None, te, hidden)
    out["imputation"] = imp

    # anomalies: digits 0-8 normal, 9 anomalous
    normal = labels <= 8
    trn, ten, anomalous = x[~test & normal], x[test & normal], x[~normal]
    anomalous_test = test[~normal]
    det = {}

    def record(label, fn, sec):
        sn, sa = fn(ten), fn(anomalous)
        det[label] = anomaly_figures(sn, sa) | {"test_only": anomaly_figures(sn, sa[anomalous_test]), "seconds": sec}
        log(f"digits anomalies: {label} AUROC {det[label]['auroc']:.4f}")

    g, sec = timed(lambda: Gaussian(trn))
    prec = np.linalg.pinv(g.cov)
    record("mahalanobis", lambda v: np.einsum("ij,jk,ik->i", v - g.mean, prec, v - g.mean), sec)
    (k, _), sec = timed(lambda: choose_bernoulli(trn))
    bmn, sec2 = timed(lambda: BernoulliMixture(trn, k))
    record("mixture", lambda v: -bmn.log_density(v), sec + sec2)
    det["mixture"]["components"] = k
    det["mixture"]["kind"] = "Bernoulli mixture"
    iso, sec = timed(lambda: IsolationForest(n_estimators=200, random_state=SEED).fit(trn))
    record("isolation_forest", lambda v: -iso.score_samples(v), sec)
    record("knn5", lambda v: knn_distance(trn, v, 5), 0.0)
    out["anomaly"] = {"normal": "digits 0-8", "anomalous": "digit 9", "train_rows": int(len(trn)),
                      "normal_test_rows": int(len(ten)), "anomalous_rows": int(len(anomalous)),
                      "anomalous_test_rows": int(anomalous_test.sum()), "detectors": det}
    return out


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--data", required=True, help="folder of iris.csv, breast_cancer.csv, diabetes_raw.csv, digits_binary.csv")
    ap.add_argument("--labels", required=True, help="folder of breast_cancer_labels.csv and digits_labels.csv")
    ap.add_argument("--csv", help="also write the figures as CSV (table, task, model, figure, value) here")
    args = ap.parse_args()

    import platform
    import scipy
    import sklearn
    result = {"settings": {"versions": f"python {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}, "
                                       f"scikit-learn {sklearn.__version__} ({time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())})",
                           "kernel": " ".join(platform.uname()[0:3] + platform.uname()[4:5])},
              "split": f"row i is a test row when i % {TEST_EVERY} == 0",
              "space": "continuous columns standardized by the training rows' mean and population sd; nats per record",
              "validation": f"training rows at positions j % {VALIDATION_EVERY} == 0",
              "tables": {}}
    tables = result["tables"]
    names, x = read_csv(f"{args.data}/iris.csv")
    tables["iris"] = continuous_table("iris", x)
    names, x = read_csv(f"{args.data}/breast_cancer.csv")
    tables["breast_cancer"] = continuous_table("breast_cancer", x)
    _, labels = read_csv(f"{args.labels}/breast_cancer_labels.csv")
    tables["breast_cancer"]["anomaly"] = breast_cancer_anomalies(x, labels[:, 0])
    names, x = read_csv(f"{args.data}/diabetes_raw.csv")
    keep = [j for j, nm in enumerate(names) if nm != "SEX"]
    tables["diabetes_raw_without_SEX"] = continuous_table("diabetes_raw without SEX", x[:, keep])
    tables["diabetes_raw_without_SEX"]["left_out"] = ["SEX"]
    names, x = read_csv(f"{args.data}/digits_binary.csv")
    _, labels = read_csv(f"{args.labels}/digits_labels.csv")
    tables["digits_binary"] = digits_table(x, labels[:, 0])

    json.dump(result, sys.stdout, indent=1)
    print()
    if args.csv:
        with open(args.csv, "w", newline="") as f:
            w = csv.writer(f)
            w.writerow(["table", "task", "model", "figure", "value"])
            for t, fig in tables.items():
                for model, d in fig["density"].items():
                    for key in ("nats", "components", "bandwidth_multiple", "seconds"):
                        if key in d:
                            w.writerow([t, "density", model, key, d[key]])
                for model, d in fig["imputation"]["models"].items():
                    for key, v in d.items():
                        w.writerow([t, "imputation", model, key, v])
                if "anomaly" in fig:
                    for model, d in fig["anomaly"]["detectors"].items():
                        for key in ("auroc", "recall_at_99", "recall_at_95", "seconds"):
                            w.writerow([t, "anomaly", model, key, d[key]])
                        w.writerow([t, "anomaly (anomalous test rows only)", model, "auroc", d["test_only"]["auroc"]])


if __name__ == "__main__":
    main()
