#!/usr/bin/python3
"""numpy side of bench/gmm.bench.ts: the same full factor-ledger computation (second-stage SDF
GMM with the factor-mean-corrected moments, Var(b) and Var(lambda) through influence functions,
pricing-error SEs, J, per-factor chi-square drop tests with the common weighting, per-factor
spanning regressions with HAC SEs, per-factor thin-beta tests, HJ distance, GRS, Fama-MacBeth with
Shanken), vectorised numpy as a researcher would write it from methods.md.

HAC variants: 'gamma' is the textbook sum of Gamma_j = x[j:].T @ x[:-j] / T (the formula as
written); 'box' uses the same box-kernel identity as lib/gmm/hac.ts (one BLAS product of window
sums), so the two languages can also be compared on identical algorithms.

usage: /usr/bin/python3 gmm_numpy.py MANIFEST.json OUT.json
MANIFEST: {"sizes": [{"file", "T", "N", "K", "L", "reps"}...]}; each file holds float64
returns (T*N) followed by factors (T*K), row-major.
"""
import json
import resource
import sys
import time

import numpy as np
from scipy import stats


def hac_gamma(x, L):
    T = x.shape[0]
    S = x.T @ x / T
    for j in range(1, L + 1):
        G = x[j:].T @ x[:-j] / T
        S += (1.0 - j / (L + 1.0)) * (G + G.T)
    return S


def hac_box(x, L):
    T, p = x.shape
    if L == 0:
        return x.T @ x / T
    c = np.vstack([np.zeros((1, p)), np.cumsum(x, axis=0)])  # c[t] = sum x[:t]
    m = np.arange(-L, T)
    hi = np.minimum(m + L + 1, T)
    lo = np.maximum(m, 0)
    Q = c[hi] - c[lo]
    return Q.T @ Q / (T * (L + 1))


def ledger(R, F, L, hac):
    T, N = R.shape
    K = F.shape[1]
    ER = R.mean(0)
    mu = F.mean(0)
    Fd = F - mu
    Sf = Fd.T @ Fd / T
    Rd = R - ER
    C = Rd.T @ Fd / T
    ERR = R.T @ R / T

    def h_of(b):
        s = Fd @ b
        return R - Rd * s[:, None]

    def solve_w(W):
        WC = W @ C
        H = np.linalg.solve(C.T @ WC, WC.T)
        return H @ ER, H

    b1, _ = solve_w(np.eye(N))
    S1 = hac(h_of(b1), L)
    W = np.linalg.inv(S1)
    b, H = solve_w(W)
    alpha = ER - C @ b
    h = h_of(b)
    Sb = hac(h, L)
    covB = H @ Sb @ H.T / T
    M = np.eye(N) - C @ H
    covA = M @ Sb @ M.T / T
    J = T * alpha @ W @ alpha
    pJ = stats.chi2.sf(J, N - K)
    # premia
    lam = Sf @ b
    psi_b = h @ H.T
    psi_l = psi_b @ Sf + Fd * (Fd @ b)[:, None] - lam
    covL = hac(psi_l, L) / T
    seb = np.sqrt(np.diag(covB))
    sel = np.sqrt(np.diag(covL))
    pb = 2 * stats.norm.sf(np.abs(b / seb))
    pl = 2 * stats.norm.sf(np.abs(lam / sel))
    # drop tests with the common weighting W
    WC = W @ C
    WE = W @ ER
    q_u = alpha @ W @ alpha
    drops = []
    for k in range(K):
        keep = [j for j in range(K) if j != k]
        Ck = C[:, keep]
        bk = np.linalg.solve(Ck.T @ WC[:, keep], Ck.T @ WE)
        g = ER - Ck @ bk
        D = T * (g @ W @ g - q_u)
        drops.append((D, stats.chi2.sf(D, 1)))
    # spanning regressions (intercept HAC se)
    spans = []
    for k in range(K):
        X = np.column_stack([np.ones(T), np.delete(F, k, axis=1)])
        XtXi = np.linalg.inv(X.T @ X)
        coef = XtXi @ (X.T @ F[:, k])
        e = F[:, k] - X @ coef
        V = XtXi @ (T * hac(X * e[:, None], L)) @ XtXi
        se = np.sqrt(V[0, 0])
        spans.append((coef[0], se, 2 * stats.norm.sf(abs(coef[0] / se))))
    # thin-beta
    thin = []
    for k in range(K):
        z = Rd * Fd[:, k:k + 1] - C[:, k]
        V = hac(z, L) / T
        st = C[:, k] @ np.linalg.solve(V, C[:, k])
        thin.append((st, stats.chi2.sf(st, N)))
    # HJ distance
    Wh = np.linalg.inv(ERR)
    bh = np.linalg.solve(C.T @ Wh @ C, C.T @ Wh @ ER)
    ah = ER - C @ bh
    hj = np.sqrt(ah @ Wh @ ah)
    # GRS
    X = np.column_stack([np.ones(T), F])
    coef = np.linalg.lstsq(X, R, rcond=None)[0]
    E = R - X @ coef
    Sig = E.T @ E / (T - K - 1)
    a = coef[0]
    Om = np.cov(F, rowvar=False, ddof=1).reshape(K, K)
    grs = (T / N) * ((T - N - K) / (T - K - 1)) * (a @ np.linalg.solve(Sig, a)) / (1 + mu @ np.linalg.solve(Om, mu))
    pg = stats.f.sf(grs, N, T - N - K)
    # Fama-MacBeth with Shanken
    beta = coef[1:].T
    lams = np.linalg.solve(beta.T @ beta, beta.T @ R.T).T
    lfm = lams.mean(0)
    Vfm = np.cov(lams, rowvar=False, ddof=1).reshape(K, K) / T
    c = lfm @ np.linalg.solve(Sf, lfm)
    Vsh = (1 + c) * Vfm + Sf / T
    return b, lam, J, pJ, drops, spans, thin, hj, grs, pg, lfm, np.sqrt(np.diag(Vsh)), seb, sel, pb, pl, np.sqrt(np.diag(covA))


def main():
    man = json.load(open(sys.argv[1]))
    out = []
    for s in man['sizes']:
        T, N, K, L = s['T'], s['N'], s['K'], s['L']
        raw = np.fromfile(s['file'], dtype='<f8')
        R = raw[:T * N].reshape(T, N).copy()
        F = raw[T * N:].reshape(T, K).copy()
        row = {'T': T, 'N': N, 'K': K}
        for name, hac in (('gamma', hac_gamma), ('box', hac_box)):
            res = ledger(R, F, L, hac)  # warm-up
            ledger(R, F, L, hac)
            t_warm = time.perf_counter()
            while time.perf_counter() - t_warm < 0.2:
                ledger(R, F, L, hac)
            times, cpus = [], []
            for _ in range(s['reps']):
                c0 = time.process_time()
                t0 = time.perf_counter()
                res = ledger(R, F, L, hac)
                times.append(time.perf_counter() - t0)
                cpus.append(time.process_time() - c0)
            row[name + 'Ms'] = 1000 * float(np.median(times))
            row[name + 'CpuMs'] = 1000 * float(np.median(cpus))
            row[name + 'J'] = float(res[2])
        out.append(row)
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    json.dump({'sizes': out, 'peakRssMb': peak, 'numpy': np.__version__}, open(sys.argv[2], 'w'))


if __name__ == '__main__':
    main()
