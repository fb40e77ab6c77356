#!/usr/bin/python3
"""Independent reference for lib/gmm, written straight from /work/shared/methods.md with numpy,
scipy and statsmodels (Debian python3 packages). It does not follow the TypeScript code: HAC is
the textbook Gamma_j sum (checked against statsmodels' S_hac_simple), regressions use statsmodels
OLS with cov_type='HAC' (use_correction=False), solves use numpy.linalg.

usage: /usr/bin/python3 gmm_reference.py IN.json OUT.json   (IN may hold one input or a list)
IN: {returns: T x N, factors: T x K, traded: [bool], lags: int, stage, weighting, form,
     factorMeansKnown, fmIntercept, dropSets: [[k,...],...], level}
    or a model-choice task: {task: 'sharpe', factors, lags, a: [k...], b: [k...]};
    {task: 'multipletests', pvalues: [[p...], ...]}; {task: 'holdout', returns, factors, split, lags,
    stage, weighting, form, factorMeansKnown}; {task: 'lstsq', data: rows [y, x1, ...]};
    {task: 'distributions', chi2Sf: [[x, df]...], fSf: [[x, d1, d2]...], normalTwoSided: [z...],
     normalPpf: [p...], chi2Ppf: [[p, df]...], fPpf: [[p, d1, d2]...]}
"""
import json
import sys

import numpy as np
from scipy import stats
import statsmodels.api as sm
from statsmodels.stats import sandwich_covariance as sw


def hac(x, L, demean=False):
    """Newey-West (1987): S = G0 + sum_j w_j (Gj + Gj'), Gj = (1/T) sum_{t>j} x_t x_{t-j}'."""
    x = np.asarray(x, dtype=float)
    if x.ndim == 1:
        x = x[:, None]
    if demean:
        x = x - x.mean(axis=0)
    T = x.shape[0]
    S = x.T @ x / T
    for j in range(1, L + 1):
        G = x[j:].T @ x[:-j] / T
        S = S + (1.0 - j / (L + 1.0)) * (G + G.T)
    return S


def hac_statsmodels(x, L):
    """statsmodels' own Bartlett HAC (no division by T inside), divided by T."""
    x = np.asarray(x, dtype=float)
    return sw.S_hac_simple(x, nlags=L) / x.shape[0]


def gmm(R, F, L, stage, weighting, form, means_known, drop_sets):
    T, N = R.shape
    K = F.shape[1]
    ER = R.mean(axis=0)
    mu = F.mean(axis=0)
    Fd = F - mu
    Sf = Fd.T @ Fd / T
    C = (R - ER).T @ Fd / T               # Cov_T(R, f)
    D = R.T @ F / T                       # E_T[R f']
    X = C if form == 'centred' else D
    ERR = R.T @ R / T

    def h_series(b):
        if form == 'uncentred':
            return R * (1.0 - F @ b)[:, None]
        e = R * (1.0 - Fd @ b)[:, None]
        if means_known:
            return e
        return e + np.outer(Fd @ b, ER)    # + E[R] b'(f - mu)

    def solve_w(W):
        A = X.T @ W @ X
        H = np.linalg.solve(A, X.T @ W)
        return H @ ER, H

    CovR = (R - ER).T @ (R - ER) / T
    W1 = {'identity': np.eye(N), 'second-moment': np.linalg.inv(ERR), 'covariance': np.linalg.inv(CovR)}[weighting]
    b1, H = solve_w(W1)
    b, W, S_w, iters, conv = b1, W1, None, 0, True
    if stage != 'first':
        cap = 100 if stage == 'iterated' else 1
        conv = stage != 'iterated'
        for it in range(1, cap + 1):
            S_w = hac(h_series(b), L)
            W = np.linalg.inv(S_w)
            bn, H = solve_w(W)
            move = np.max(np.abs(bn - b))
            b = bn
            iters = it
            # methods.md: relative stop, max |db| <= 1e-10 max(1e-300, max |b|)
            if stage == 'iterated' and move <= 1e-10 * max(1e-300, np.max(np.abs(bn))):
                conv = True
                break
    alpha = ER - X @ b
    h = h_series(b)
    Sb = hac(h, L)
    psi_b = h @ H.T
    covB = hac(psi_b, L) / T               # (1/T) LRV(psi_b)
    M = np.eye(N) - X @ H
    covA = M @ Sb @ M.T / T
    df = N - K
    if stage == 'first':
        w, V = np.linalg.eigh(covA)
        order = np.argsort(w)[::-1][:df]
        P = (V[:, order] / w[order]) @ V[:, order].T if df > 0 else np.zeros((N, N))
        J = float(alpha @ P @ alpha) if df > 0 else 0.0
    else:
        J = float(T * alpha @ np.linalg.solve(S_w, alpha))
    # premia
    if form == 'centred':
        lam = Sf @ b
        psi_l = psi_b @ Sf.T + np.outer(Fd @ b, np.ones(K)) * Fd - lam
    else:
        c = 1.0 - mu @ b
        lam = Sf @ b / c
        A = Sf + np.outer(lam, mu)
        psi_l = (psi_b @ A.T + Fd * (Fd @ b)[:, None] - Sf @ b + np.outer(Fd @ b, lam)) / c
    covL = hac(psi_l, L) / T
    # drop tests with W* from the unrestricted second stage (first stage: S at the first-stage b)
    drops = []
    if True:
        Wstar = np.linalg.inv(S_w if stage != 'first' else hac(h_series(b1), L))
        def q(cols):
            if len(cols) == 0:
                g = ER
            else:
                Xr = X[:, cols]
                br = np.linalg.solve(Xr.T @ Wstar @ Xr, Xr.T @ Wstar @ ER)
                g = ER - Xr @ br
            return float(g @ Wstar @ g)
        qu = q(list(range(K)))
        for S in drop_sets:
            keep = [k for k in range(K) if k not in S]
            Dst = T * (q(keep) - qu)
            drops.append({'stat': Dst, 'df': len(S), 'p': float(stats.chi2.sf(Dst, len(S)))})
    walds = []
    for S in drop_sets:
        bs = b[S]
        Vs = covB[np.ix_(S, S)]
        st = float(bs @ np.linalg.solve(Vs, bs))
        walds.append({'stat': st, 'df': len(S), 'p': float(stats.chi2.sf(st, len(S)))})
    # HJ distance at the second-moment-weighted first stage
    Wh = np.linalg.inv(ERR)
    bh = np.linalg.solve(X.T @ Wh @ X, X.T @ Wh @ ER)
    ah = ER - X @ bh
    hj = float(np.sqrt(ah @ Wh @ ah))
    return {
        'b': b.tolist(), 'bFirst': b1.tolist(), 'covB': covB.tolist(), 'covBFromS': (H @ Sb @ H.T / T).tolist(),
        'alpha': alpha.tolist(), 'covAlpha': covA.tolist(), 'J': J, 'Jdf': df, 'Jp': float(stats.chi2.sf(J, df)) if df > 0 else 1.0,
        'iterations': iters, 'converged': conv,
        'lambda': lam.tolist(), 'covLambda': covL.tolist(), 'drops': drops, 'walds': walds, 'hj': hj,
        'S_b': Sb.tolist(),
    }


def robust(R, F, L, weighting, form, means_known):
    """Misspecification-robust first-stage SEs, straight from methods.md "Robust inference"
    (Kan and Robotti 2008; Gospodinov, Kan and Robotti 2014), with explicit T x N x K and
    T x N x N arrays (no shortcuts):
      psi_t = A^{-1} [ X'W (h_t - e) + (X_t - X)' W e - X'W (Q_t - Q) W e ],  A = X'WX,
    X_t: (R_t - Rbar)(f_t - mu)' centred; R_t (f_t - mu)' centred with factor means known
    (mu treated as known, matching h_t = R_t(1 - (f_t - mu)'b)); R_t f_t' uncentred.
    Q_t = R_t R_t' (second moment), (R_t - Rbar)(R_t - Rbar)' (covariance), none for W = I.
    Var(b) = LRV(psi)/T; lambda with psi in place of psi_b (centred: Sigma_f b)."""
    T, N = R.shape
    K = F.shape[1]
    ER = R.mean(axis=0)
    mu = F.mean(axis=0)
    Fd = F - mu
    Rd = R - ER
    if form == 'uncentred':
        Xt = np.einsum('ti,tk->tik', R, F)
    elif means_known:
        Xt = np.einsum('ti,tk->tik', R, Fd)
    else:
        Xt = np.einsum('ti,tk->tik', Rd, Fd)
    X = Xt.mean(axis=0)
    if weighting == 'identity':
        Q, Qt = None, None
        W = np.eye(N)
    elif weighting == 'second-moment':
        Qt = np.einsum('ti,tj->tij', R, R)
        Q = Qt.mean(axis=0)
        W = np.linalg.inv(Q)
    else:
        Qt = np.einsum('ti,tj->tij', Rd, Rd)
        Q = Qt.mean(axis=0)
        W = np.linalg.inv(Q)
    A = X.T @ W @ X
    b = np.linalg.solve(A, X.T @ W @ ER)
    e = ER - X @ b
    h = R - np.einsum('tik,k->ti', Xt, b)          # h_t = R_t - X_t b (its mean is e)
    inner = (h - e) @ (W @ X)                       # X'W (h_t - e), T x K
    inner = inner + np.einsum('tik,i->tk', Xt - X, W @ e)
    if Qt is not None:
        inner = inner - np.einsum('ik,tij,j->tk', W @ X, Qt - Q, W @ e)
    psi = np.linalg.solve(A, inner.T).T
    covB = hac(psi, L) / T
    Sf = Fd.T @ Fd / T
    if form == 'centred':
        lam = Sf @ b
        psi_l = psi @ Sf.T + Fd * (Fd @ b)[:, None] - lam
    else:
        c = 1.0 - mu @ b
        lam = Sf @ b / c
        Am = Sf + np.outer(lam, mu)
        psi_l = (psi @ Am.T + Fd * (Fd @ b)[:, None] - Sf @ b + np.outer(Fd @ b, lam)) / c
    covL = hac(psi_l, L) / T
    return {'b': b.tolist(), 'covB': covB.tolist(), 'covLambda': covL.tolist(), 'e': e.tolist(), 'psi': psi.tolist()}


def spanning(F, k_set, L):
    """Regress each factor in k_set on a constant and the other factors (statsmodels OLS HAC)."""
    T, K = F.shape
    others = [k for k in range(K) if k not in k_set]
    X = np.column_stack([np.ones(T)] + [F[:, j] for j in others])
    alphas, psis = [], []
    singles = []
    for k in k_set:
        res = sm.OLS(F[:, k], X).fit(cov_type='HAC', cov_kwds={'maxlags': L, 'use_correction': False})
        alphas.append(res.params[0])
        singles.append({'alpha': float(res.params[0]), 'se': float(res.bse[0])})
        # intercept influence: first row of (X'X/T)^{-1} times x_t e_t
        Qi = np.linalg.inv(X.T @ X / T)
        psis.append((X * res.resid[:, None]) @ Qi[0])
    a = np.array(alphas)
    Psi = np.column_stack(psis)
    V = hac(Psi, L) / T
    stat = float(a @ np.linalg.solve(V, a))
    return singles, {'alpha': a.tolist(), 'stat': stat, 'p': float(stats.chi2.sf(stat, len(k_set)))}


def thin_beta(R, F, k, L):
    T, N = R.shape
    Rd = R - R.mean(axis=0)
    fk = F[:, k] - F[:, k].mean()
    Ck = Rd.T @ fk / T
    z = Rd * fk[:, None]          # methods.md: HAC series under the null, no subtraction of Ck
    V = hac(z, L) / T
    stat = float(Ck @ np.linalg.solve(V, Ck))
    return {'stat': stat, 'df': N, 'p': float(stats.chi2.sf(stat, N))}


def grs(R, F):
    T, N = R.shape
    K = F.shape[1]
    X = sm.add_constant(F, prepend=True)
    alpha, resid = [], []
    for i in range(N):
        res = sm.OLS(R[:, i], X).fit()
        alpha.append(res.params[0])
        resid.append(res.resid)
    alpha = np.array(alpha)
    E = np.column_stack(resid)
    Sigma = E.T @ E / (T - K - 1)
    mu = F.mean(axis=0)
    Omega = np.cov(F, rowvar=False, ddof=1).reshape(K, K)
    stat = (T / N) * ((T - N - K) / (T - K - 1)) * float(alpha @ np.linalg.solve(Sigma, alpha)) / (1 + float(mu @ np.linalg.solve(Omega, mu)))
    return {'stat': stat, 'df1': N, 'df2': T - N - K, 'p': float(stats.f.sf(stat, N, T - N - K)), 'alpha': alpha.tolist()}


def fama_macbeth(R, F, intercept):
    T, N = R.shape
    K = F.shape[1]
    X = sm.add_constant(F, prepend=True)
    betas = np.array([np.linalg.lstsq(X, R[:, i], rcond=None)[0][1:] for i in range(N)])  # N x K
    Z = np.column_stack([np.ones(N), betas]) if intercept else betas
    lams = np.array([np.linalg.lstsq(Z, R[t], rcond=None)[0] for t in range(T)])
    lam = lams.mean(axis=0)
    Vfm = np.cov(lams, rowvar=False, ddof=1).reshape(Z.shape[1], Z.shape[1]) / T
    Fd = F - F.mean(axis=0)
    Sf = Fd.T @ Fd / T
    off = 1 if intercept else 0
    lf = lam[off:]
    c = float(lf @ np.linalg.solve(Sf, lf))
    Vsh = (1 + c) * Vfm
    Vsh[off:, off:] += Sf / T
    return {'lambda': lam.tolist(), 'se': np.sqrt(np.diag(Vfm)).tolist(), 'seShanken': np.sqrt(np.diag(Vsh)).tolist(), 'c': c}


def main():
    data = json.load(open(sys.argv[1]))
    # a list of inputs is answered with a list of outputs (one interpreter start for many cases)
    if isinstance(data, list):
        json.dump([one(d) for d in data], open(sys.argv[2], 'w'))
    else:
        json.dump(one(data), open(sys.argv[2], 'w'))


def sharpe_theta(F, L):
    """Barillas and Shanken (2017): theta = mu' Sigma_f^{-1} mu (divisor T), influence
    psi_t = 2 u_t - u_t^2 + theta, u_t = mu' Sigma_f^{-1} (f_t - mu); se = sqrt(LRV(psi)/T)."""
    T = F.shape[0]
    mu = F.mean(axis=0)
    Fd = F - mu
    Sf = Fd.T @ Fd / T
    w = np.linalg.solve(Sf, mu)
    theta = float(mu @ w)
    u = Fd @ w
    psi = 2 * u - u ** 2 + theta
    return theta, psi, float(np.sqrt(hac(psi, L)[0, 0] / T))


def sharpe_task(inp):
    """methods.md "Choosing among models": theta, se and the BKRS (2020) z test of two models."""
    F = np.array(inp['factors'], dtype=float)
    L = int(inp['lags'])
    ta, pa, sa = sharpe_theta(F[:, inp['a']], L)
    tb, pb, sb = sharpe_theta(F[:, inp['b']], L)
    T = F.shape[0]
    se = float(np.sqrt(hac(pa - pb, L)[0, 0] / T))
    z = (ta - tb) / se
    return {'a': {'theta': ta, 'se': sa}, 'b': {'theta': tb, 'se': sb}, 'diff': ta - tb, 'se': se, 'z': z,
            'p': float(2 * stats.norm.sf(abs(z)))}


def multipletests_task(inp):
    """statsmodels.stats.multitest.multipletests, methods 'holm' and 'fdr_by'."""
    from statsmodels.stats.multitest import multipletests
    out = []
    for p in inp['pvalues']:
        p = np.array(p, dtype=float)
        out.append({'holm': multipletests(p, method='holm')[1].tolist(), 'by': multipletests(p, method='fdr_by')[1].tolist()})
    return out


def holdout_task(inp):
    """Kozak, Nagel and Santosh (2020): b from the periods before the split (this script's gmm),
    priced on the periods after it: alpha2 = m2 - C2 b (D2 b uncentred), R2oos = 1 - a'a / m2'm2."""
    R = np.array(inp['returns'], dtype=float)
    F = np.array(inp['factors'], dtype=float)
    s = int(inp['split'])
    g = gmm(R[:s], F[:s], int(inp['lags']), inp['stage'], inp['weighting'], inp['form'], inp['factorMeansKnown'], [])
    b = np.array(g['b'])
    R2, F2 = R[s:], F[s:]
    T2 = R2.shape[0]
    m2 = R2.mean(axis=0)
    if inp['form'] == 'centred':
        X2 = (R2 - m2).T @ (F2 - F2.mean(axis=0)) / T2
    else:
        X2 = R2.T @ F2 / T2
    a2 = m2 - X2 @ b
    return {'b': b.tolist(), 'alpha': a2.tolist(), 'holdoutMean': m2.tolist(), 'meanAbsAlpha': float(np.mean(np.abs(a2))),
            'r2oos': float(1 - a2 @ a2 / (m2 @ m2))}


def lstsq_task(inp):
    """numpy.linalg.lstsq of column 0 on a constant and the other columns; classical SEs from QR."""
    d = np.array(inp['data'], dtype=float)
    y = d[:, 0]
    X = np.column_stack([np.ones(len(y)), d[:, 1:]])
    b = np.linalg.lstsq(X, y, rcond=None)[0]
    e = y - X @ b
    s2 = e @ e / (len(y) - X.shape[1])
    r = np.linalg.qr(X)[1]
    ri = np.linalg.inv(r)
    se = np.sqrt(np.diag(ri @ ri.T) * s2)
    return {'b': b.tolist(), 'se': se.tolist()}


def distributions_task(inp):
    """scipy.stats upper tails and quantiles: chi2.sf, f.sf, 2 norm.sf(|z|), norm.ppf, chi2.ppf, f.ppf."""
    return {
        'chi2Sf': [float(stats.chi2.sf(x, df)) for x, df in inp['chi2Sf']],
        'fSf': [float(stats.f.sf(x, d1, d2)) for x, d1, d2 in inp['fSf']],
        'normalTwoSided': [float(2 * stats.norm.sf(abs(z))) for z in inp['normalTwoSided']],
        'normalPpf': [float(stats.norm.ppf(p)) for p in inp['normalPpf']],
        'chi2Ppf': [float(stats.chi2.ppf(p, df)) for p, df in inp['chi2Ppf']],
        'fPpf': [float(stats.f.ppf(p, d1, d2)) for p, d1, d2 in inp['fPpf']],
        'mpmath': distributions_mpmath(inp),
    }


def distributions_mpmath(inp):
    """The same functions at 40 significant digits with mpmath (Debian python3-mpmath), rounded to
    double: the true values at the double arguments that Keelson and scipy both pass to the special
    function (d2/(d2 + d1 x) and |z|/sqrt(2) rounded to double as in IEEE arithmetic), so that the
    comparison measures the special functions, not the rounding of their arguments."""
    import math
    import mpmath
    mpmath.mp.dps = 40
    f = mpmath.mpf
    return {
        'chi2Sf': [float(mpmath.gammainc(f(df) / 2, f(x) / 2, mpmath.inf, regularized=True)) for x, df in inp['chi2Sf']],
        'fSf': [float(mpmath.betainc(f(d2) / 2, f(d1) / 2, 0, f(d2 / (d2 + d1 * x)), regularized=True)) for x, d1, d2 in inp['fSf']],
        'normalTwoSided': [float(mpmath.erfc(f(abs(z) * math.sqrt(0.5)))) for z in inp['normalTwoSided']],
        'normalPpf': [float(mpmath.sqrt(2) * mpmath.erfinv(2 * f(p) - 1)) for p in inp['normalPpf']],
        'mpmath': mpmath.__version__,
    }


TASKS = {'sharpe': sharpe_task, 'multipletests': multipletests_task, 'holdout': holdout_task,
         'lstsq': lstsq_task, 'distributions': distributions_task}


def one(inp):
    if 'task' in inp:
        return TASKS[inp['task']](inp)
    R = np.array(inp['returns'], dtype=float)
    F = np.array(inp['factors'], dtype=float)
    L = int(inp['lags'])
    out = {}
    out['gmm'] = gmm(R, F, L, inp['stage'], inp['weighting'], inp['form'], inp['factorMeansKnown'],
                     [list(s) for s in inp.get('dropSets', [])])
    # HAC of the second-stage moment series both ways (textbook sum and statsmodels)
    out['hacSelf'] = hac(R, L).tolist()
    out['hacStatsmodels'] = hac_statsmodels(R, L).tolist()
    out['hacDemeaned'] = hac(R, L, demean=True).tolist()
    K = F.shape[1]
    traded = inp['traded']
    out['spanning'] = [spanning(F, [k], L)[0][0] if traded[k] else None for k in range(K)]
    out['spanningZ'] = [spanning(F, [k], L)[1] if traded[k] else None for k in range(K)]
    js = inp.get('jointSpanning')
    out['jointSpanning'] = spanning(F, js, L)[1] if js else None
    out['thinBeta'] = [thin_beta(R, F, k, L) for k in range(K)]
    if inp['stage'] == 'first':
        out['robust'] = robust(R, F, L, inp['weighting'], inp['form'], inp['factorMeansKnown'])
    out['grs'] = grs(R, F) if all(traded) else None
    out['famaMacBeth'] = fama_macbeth(R, F, bool(inp.get('fmIntercept', False)))
    # time-series OLS of the first asset on a constant and the factors, statsmodels HAC SEs
    Xo = sm.add_constant(F, prepend=True)
    ro = sm.OLS(R[:, 0], Xo).fit(cov_type='HAC', cov_kwds={'maxlags': L, 'use_correction': False})
    rc = sm.OLS(R[:, 0], Xo).fit()
    out['olsHac'] = {'params': ro.params.tolist(), 'bse': ro.bse.tolist()}
    out['olsClassical'] = {'params': rc.params.tolist(), 'bse': rc.bse.tolist(), 'rsquared': float(rc.rsquared)}
    # OLS of mean returns on covariances without intercept (identity check for W = I)
    ER = R.mean(axis=0)
    C = (R - ER).T @ (F - F.mean(axis=0)) / R.shape[0]
    out['olsMeanOnCov'] = np.linalg.lstsq(C, ER, rcond=None)[0].tolist()
    return out


if __name__ == '__main__':
    main()
