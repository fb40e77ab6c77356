#!/usr/bin/python3
"""Audit reference for lib/gmm: a second, independent reading of /work/shared/methods.md.

Written from the text of methods.md only (not from lib/gmm nor from gmm_reference.py), with
Debian's numpy and scipy. Where a route exists that differs from the obvious one it is taken on
purpose, so that a shared algebra slip would not hide:
  - weighted GMM is solved as a whitened least-squares problem (Cholesky of the weighting's
    inverse, numpy lstsq) instead of the normal equations;
  - the first-stage J pseudo-inverse is an SVD truncated to rank N - K;
  - uncentred premia variances use a complex-step Jacobian of lambda(b, mu, Sigma_f), not a
    hand-derived delta method;
  - spanning standard errors use the HAC sandwich (X'X)^{-1} [T LRV(x e)] (X'X)^{-1};
  - the data are generated here (numpy default_rng, seeded), so the TypeScript side reads them.

usage: /usr/bin/python3 audit_reference.py IN.json OUT.json
IN: list of cases {seed, T, N, K, traded, stage, weighting, form, factorMeansKnown, lags (int or
    'auto'), level, fmIntercept, dropSet (list of factor indices or null)}
OUT: list of {returns, factors, expected: {...}} (one per case).
"""
import json
import sys

import numpy as np
from scipy import linalg as sla
from scipy import stats


# ---------------------------------------------------------------- data (invented, seeded)
def generate(seed, T, N, K, thin=0.3):
    """Invented economy: AR(1) correlated factors, linear returns with small pricing errors."""
    rng = np.random.default_rng(seed)
    mu = 0.003 + 0.002 * np.arange(K)
    sd = 0.025 + 0.01 * np.arange(K)
    A = np.eye(K) * 0.8 + 0.2  # cross-correlation through a common mixing matrix
    f = np.zeros((T, K))
    prev = np.zeros(K)
    for t in range(T):
        e = A @ rng.standard_normal(K) / np.sqrt(0.64 + 0.36 * K)
        prev = 0.15 * prev + np.sqrt(1 - 0.15 ** 2) * e
        f[t] = mu + sd * prev
    betas = rng.uniform(0.1, 1.5, size=(N, K))
    betas[:, -1] *= thin  # last factor has thinner betas
    if thin == 0.0:
        # a useless factor (Kan-Zhang 1999): independent of everything, zero betas
        f[:, -1] = mu[-1] + sd[-1] * rng.standard_normal(T)
    alphas = 0.0008 * rng.standard_normal(N)
    R = alphas + f @ betas.T + 0.02 * rng.standard_normal((T, N))
    return R, f


# ---------------------------------------------------------------- methods.md: HAC
def lrv(x, L, demean=False):
    """Newey-West (1987) as written in methods.md: S = G0 + sum_j (1 - j/(L+1)) (Gj + Gj'),
    Gj = (1/T) sum_{t=j+1..T} x_t x_{t-j}'; x not demeaned unless asked."""
    x = np.asarray(x, dtype=float)
    if x.ndim == 1:
        x = x[:, None]
    if demean:
        x = x - x.mean(axis=0)
    T = x.shape[0]
    S = np.einsum('ti,tj->ij', x, x) / T
    for j in range(1, L + 1):
        G = np.einsum('ti,tj->ij', x[j:], x[: T - j]) / T
        S = S + (1.0 - j / (L + 1.0)) * (G + G.T)
    return S


def default_lag(T):
    """methods.md: L = floor(4 (T/100)^(2/9)) (common practice, Newey-West 1994)."""
    return int(np.floor(4.0 * (T / 100.0) ** (2.0 / 9.0)))


def two_sided(z):
    return float(2.0 * stats.norm.sf(abs(z)))


# ---------------------------------------------------------------- methods.md: SDF GMM
class Model:
    def __init__(self, R, F, form, means_known, L):
        self.R, self.F, self.L = R, F, L
        self.T, self.N = R.shape
        self.K = F.shape[1]
        self.form = form
        self.means_known = means_known and form == 'centred'
        self.ER = R.mean(axis=0)                        # E_T[R]
        self.mu = F.mean(axis=0)                        # mu = E_T[f]
        self.Ft = F - self.mu
        self.Sf = self.Ft.T @ self.Ft / self.T          # Sigma_f = Cov_T(f, f), divisor T
        self.C = (R - self.ER).T @ self.Ft / self.T     # C = Cov_T(R, f)
        self.D = R.T @ F / self.T                       # D = E_T[R f']
        self.X = self.C if form == 'centred' else self.D
        self.ERR = R.T @ R / self.T                     # E_T[R R']

    def h(self, b):
        """Moment series (methods.md 'Moment series'):
        centred, means estimated: R_t (1 - (f_t - mu)'b) + E_T[R] b'(f_t - mu)  (Kan-Robotti 2008)
        centred, factorMeansKnown: R_t (1 - (f_t - mu)'b)
        uncentred: R_t (1 - f_t'b)."""
        if self.form == 'uncentred':
            return self.R * (1.0 - self.F @ b)[:, None]
        s = self.Ft @ b
        e = self.R * (1.0 - s)[:, None]
        return e if self.means_known else e + s[:, None] * self.ER[None, :]

    def solve(self, Winv_chol, cols=None):
        """b = (X'WX)^{-1} X'W E_T[R] as whitened least squares: W = U'U with U = Lc^{-1},
        Lc the lower Cholesky factor of W^{-1}. Returns b and H = (X'WX)^{-1} X'W."""
        X = self.X if cols is None else self.X[:, cols]
        if Winv_chol is None:
            U = np.eye(self.N)
        else:
            U = sla.solve_triangular(Winv_chol, np.eye(self.N), lower=True)
        b = np.linalg.lstsq(U @ X, U @ self.ER, rcond=None)[0]
        H = np.linalg.pinv(U @ X) @ U
        return b, H


def gmm(model, stage, weighting):
    T, N, K, L = model.T, model.N, model.K, model.L
    # First stage: W = I or (E_T[RR'])^{-1} (Hansen-Jagannathan 1997)
    chol1 = None if weighting == 'identity' else np.linalg.cholesky(model.ERR)
    b1, H = model.solve(chol1)
    b, S_w, iters, converged, S_second = b1, None, 0, True, None
    if stage != 'first':
        cap = 100 if stage == 'iterated' else 1
        converged = stage == 'second'
        for it in range(1, cap + 1):
            S_w = lrv(model.h(b), L)           # S at the previous b (first-stage b at it = 1)
            if it == 1:
                S_second = S_w
            bn, H = model.solve(np.linalg.cholesky(S_w))
            move = np.max(np.abs(bn - b))
            b, iters = bn, it
            # methods.md: relative stop, max |db| <= 1e-10 max(1e-300, max |b|)
            if stage == 'iterated' and move <= 1e-10 * max(1e-300, np.max(np.abs(bn))):
                converged = True
                break
    alpha = model.ER - model.X @ b                      # alpha = g(b)
    hb = model.h(b)                                     # h_t at the reported b
    psi_b = hb @ H.T                                    # psi_b,t = H h_t
    covB = lrv(psi_b, L) / T                            # Var(b) = (1/T) LRV(psi_b)
    Sb = lrv(hb, L)
    M = np.eye(N) - model.X @ H
    covA = M @ Sb @ M.T / T                             # Var(alpha) = (1/T)(I - CH) S (I - CH)'
    df = N - K
    if stage == 'first':
        # J = alpha' Var(alpha)^+ alpha, Moore-Penrose of rank N - K (SVD truncated)
        U, s, Vt = np.linalg.svd(covA)
        P = (Vt[:df].T / s[:df]) @ U[:, :df].T if df > 0 else np.zeros((N, N))
        J = float(alpha @ P @ alpha)
    else:
        J = float(T * alpha @ np.linalg.solve(S_w, alpha))  # J = T alpha' S^{-1} alpha
    Jp = float(stats.chi2.sf(J, df)) if df > 0 else 1.0
    return dict(b=b, b1=b1, H=H, psi_b=psi_b, covB=covB, alpha=alpha, covA=covA, J=J, Jdf=df, Jp=Jp,
                S_w=S_w, S_second=S_second, iterations=iters, converged=converged)


def premia(model, fit):
    T, K, L = model.T, model.K, model.L
    b, psi_b = fit['b'], fit['psi_b']
    if model.form == 'centred':
        # lambda = Sigma_f b; psi_lambda = Sigma_f psi_b + (f - mu)(f - mu)'b - lambda
        lam = model.Sf @ b
        psi = psi_b @ model.Sf.T + model.Ft * (model.Ft @ b)[:, None] - lam
    else:
        # lambda = Sigma_f b / (1 - mu'b); methods.md gives no variance formula for the uncentred
        # premia. Here: influence of (b, mu, Sigma_f) mapped through a complex-step Jacobian.
        def lam_of(bb, mm, SS):
            return SS @ bb / (1.0 - mm @ bb)
        lam = lam_of(b, model.mu, model.Sf).real
        h = 1e-30
        Jb = np.zeros((K, K))
        Jm = np.zeros((K, K))
        JS = np.zeros((K, K, K))
        for j in range(K):
            e = np.zeros(K, dtype=complex)
            e[j] = 1j * h
            Jb[:, j] = lam_of(b + e, model.mu, model.Sf).imag / h
            Jm[:, j] = lam_of(b, model.mu + e, model.Sf).imag / h
            for i in range(K):
                E = np.zeros((K, K), dtype=complex)
                E[i, j] = 1j * h
                JS[:, i, j] = lam_of(b, model.mu, model.Sf + E).imag / h
        dS = np.einsum('ti,tj->tij', model.Ft, model.Ft) - model.Sf     # influence of Sigma_f
        psi = psi_b @ Jb.T + model.Ft @ Jm.T + np.einsum('kij,tij->tk', JS, dS)
    covL = lrv(psi, L) / T
    return lam, covL


def drop_stat(model, Wstar_S, drop):
    """Chi-square difference (Newey-West 1987 IER) with W* = S_u^{-1}, both models with W*."""
    T, K = model.T, model.K
    Wstar = np.linalg.inv(Wstar_S)
    chol = np.linalg.cholesky(Wstar_S)
    keep = [k for k in range(K) if k not in drop]

    def q(cols):
        if len(cols) == 0:
            g = model.ER
        else:
            br, _ = model.solve(chol, cols)
            g = model.ER - model.X[:, cols] @ br
        return float(g @ Wstar @ g)

    D = T * (q(keep) - q(list(range(K))))
    return D, float(stats.chi2.sf(D, len(drop)))


def spanning(F, S, L):
    """Huberman-Kandel: OLS f_k = a + beta' f_rest + e for each k in S (rest = factors not in S);
    Var(a) by the HAC sandwich (X'X)^{-1} [T LRV(x_t e_t)] (X'X)^{-1}, no small-sample factor."""
    T, K = F.shape
    rest = [k for k in range(K) if k not in S]
    X = np.column_stack([np.ones(T)] + [F[:, j] for j in rest])
    XtXi = np.linalg.inv(X.T @ X)
    a, scores = [], []
    for k in S:
        coef = np.linalg.lstsq(X, F[:, k], rcond=None)[0]
        e = F[:, k] - X @ coef
        a.append(coef[0])
        scores.append(X * e[:, None])
    p = X.shape[1]
    Z = np.column_stack(scores)                          # T x (|S| p)
    Omega = T * lrv(Z, L)
    big = np.kron(np.eye(len(S)), XtXi)
    V = big @ Omega @ big.T
    idx = [c * p for c in range(len(S))]                 # the intercepts
    Va = V[np.ix_(idx, idx)]
    a = np.array(a)
    return a, Va


def thin_beta(model, k):
    """Kan-Zhang (1999) warning: HAC Wald that the N covariances Cov(R_i, f_k) are zero; the
    HAC series is taken under the null (methods.md: no subtraction of the sample covariance)."""
    T, L = model.T, model.L
    Ck = model.C[:, k]
    z = (model.R - model.ER) * model.Ft[:, [k]]
    V = lrv(z, L) / T
    W = float(Ck @ np.linalg.solve(V, Ck))
    p = float(stats.chi2.sf(W, model.N))
    return dict(stat=W, p=p, flag=bool(p >= 0.10))


def grs(R, F):
    """GRS (1989): divisors T - K - 1 (residuals) and T - 1 (factors), F(N, T - N - K)."""
    T, N = R.shape
    K = F.shape[1]
    X = np.column_stack([np.ones(T), F])
    B = np.linalg.lstsq(X, R, rcond=None)[0]
    E = R - X @ B
    alpha = B[0]
    Sigma = E.T @ E / (T - K - 1)
    Omega = np.atleast_2d(np.cov(F.T, ddof=1))
    mu = F.mean(axis=0)
    stat = (T / N) * ((T - N - K) / (T - K - 1)) * float(alpha @ np.linalg.solve(Sigma, alpha)) \
        / (1.0 + float(mu @ np.linalg.solve(Omega, mu)))
    return dict(stat=stat, df1=N, df2=T - N - K, p=float(stats.f.sf(stat, N, T - N - K)))


def fama_macbeth(model, intercept):
    """Fama-MacBeth (1973) with full-sample betas; se = sd/sqrt(T), sd divisor T - 1; Shanken
    (1992): (1 + lambda' Sigma_f^{-1} lambda) Var_FM + Sigma_f / T on the factor premia."""
    R, F, T, N, K = model.R, model.F, model.T, model.N, model.K
    X = np.column_stack([np.ones(T), F])
    beta = np.linalg.lstsq(X, R, rcond=None)[0][1:].T     # N x K
    Z = np.column_stack([np.ones(N), beta]) if intercept else beta
    lam_t = np.linalg.lstsq(Z, R.T, rcond=None)[0].T       # T x q
    lam = lam_t.mean(axis=0)
    sd = lam_t.std(axis=0, ddof=1)
    se = sd / np.sqrt(T)
    VFM = np.atleast_2d(np.cov(lam_t.T, ddof=1)) / T
    off = 1 if intercept else 0
    lf = lam[off:]
    c = float(lf @ np.linalg.solve(model.Sf, lf))
    Vsh = (1.0 + c) * VFM
    Vsh[off:, off:] += model.Sf / T
    seSh = np.sqrt(np.diag(Vsh))
    return dict(lam=lam, se=se, seSh=seSh, tSh=lam / seSh, pSh=[two_sided(x) for x in lam / seSh], c=c)


def hj(model):
    """HJ (1997): sqrt(alpha' E_T[RR']^{-1} alpha) at the second-moment-weighted first stage."""
    b, _ = model.solve(np.linalg.cholesky(model.ERR))
    a = model.ER - model.X @ b
    return float(np.sqrt(a @ np.linalg.solve(model.ERR, a)))


def verdict(pB, pL, level):
    needed, priced = pB < level, pL < level
    if needed and priced:
        return 'needed and priced'
    if priced:
        return 'priced, not needed'
    if needed:
        return 'needed, not priced alone'
    return 'neither'


def one(case):
    R, F = generate(case['seed'], case['T'], case['N'], case['K'], case.get('thin', 0.3))
    T, N = R.shape
    K = F.shape[1]
    L = default_lag(T) if case['lags'] == 'auto' else int(case['lags'])
    model = Model(R, F, case['form'], case['factorMeansKnown'], L)
    fit = gmm(model, case['stage'], case['weighting'])
    lam, covL = premia(model, fit)
    level = case['level']
    z = stats.norm.ppf(1 - level / 2)
    factors = []
    for k in range(K):
        seB = float(np.sqrt(fit['covB'][k, k]))
        seL = float(np.sqrt(covL[k, k]))
        tB, tL = float(fit['b'][k] / seB), float(lam[k] / seL)
        row = dict(b=float(fit['b'][k]), seB=seB, tB=tB, pB=two_sided(tB),
                   ciB=[float(fit['b'][k] - z * seB), float(fit['b'][k] + z * seB)],
                   lam=float(lam[k]), seL=seL, tL=tL, pL=two_sided(tL))
        row['verdict'] = verdict(row['pB'], row['pL'], level)
        row['drop'] = None
        row['dropFirstSecondStage'] = None
        if case['stage'] != 'first':
            D, p = drop_stat(model, fit['S_w'], [k])
            row['drop'] = dict(stat=D, p=p)
            D2, p2 = drop_stat(model, fit['S_second'], [k])
            row['dropFirstSecondStage'] = dict(stat=D2, p=p2)
        else:
            # W* from the unrestricted model's second stage, even though the reported fit is
            # first stage (methods.md item 2 does not depend on the stage shown)
            S2 = lrv(model.h(fit['b1']), L)
            D, p = drop_stat(model, S2, [k])
            row['dropFromSecondStage'] = dict(stat=D, p=p)
        if case['traded'][k]:
            a, Va = spanning(F, [k], L)
            se = float(np.sqrt(Va[0, 0]))
            row['spanning'] = dict(alpha=float(a[0]), se=se, t=float(a[0] / se), p=two_sided(a[0] / se))
        else:
            row['spanning'] = None
        row['thin'] = thin_beta(model, k)
        factors.append(row)
    out = dict(T=T, N=N, K=K, lags=L, iterations=fit['iterations'], converged=fit['converged'],
               factors=factors,
               alpha=fit['alpha'].tolist(), seAlpha=np.sqrt(np.diag(fit['covA'])).tolist(),
               J=dict(stat=fit['J'], df=fit['Jdf'], p=fit['Jp']), hj=hj(model))
    out['grs'] = grs(R, F) if all(case['traded']) else None
    fm = fama_macbeth(model, case.get('fmIntercept', False))
    out['fm'] = dict(lam=fm['lam'].tolist(), se=fm['se'].tolist(), seSh=fm['seSh'].tolist(),
                     tSh=fm['tSh'].tolist(), pSh=fm['pSh'], c=fm['c'])
    S = case.get('dropSet')
    if S:
        bS = fit['b'][S]
        wald = float(bS @ np.linalg.solve(fit['covB'][np.ix_(S, S)], bS))
        jd = dict(wald=dict(stat=wald, df=len(S), p=float(stats.chi2.sf(wald, len(S)))), drop=None)
        if case['stage'] != 'first':
            D, p = drop_stat(model, fit['S_w'], S)
        else:
            D, p = drop_stat(model, lrv(model.h(fit['b1']), L), S)
        jd['drop'] = dict(stat=D, p=p)
        out['jointDrop'] = jd
        if all(case['traded'][k] for k in S):
            a, Va = spanning(F, S, L)
            st = float(a @ np.linalg.solve(Va, a))
            out['jointSpanning'] = dict(alpha=a.tolist(), stat=st, df=len(S), p=float(stats.chi2.sf(st, len(S))))
        else:
            out['jointSpanning'] = None
    # for the iterated case: how far Var(alpha) with the weighting S (at the previous b) is from
    # Var(alpha) with S at the reported b (methods.md says only "S")
    if fit['S_w'] is not None:
        M = np.eye(N) - model.X @ fit['H']
        covA_w = M @ fit['S_w'] @ M.T / T
        out['seAlphaWeightingS'] = np.sqrt(np.diag(covA_w)).tolist()
    return dict(returns=R.tolist(), factors=F.tolist(), expected=out)


def main():
    cases = json.load(open(sys.argv[1]))
    json.dump([one(c) for c in cases], open(sys.argv[2], 'w'))


if __name__ == '__main__':
    main()
