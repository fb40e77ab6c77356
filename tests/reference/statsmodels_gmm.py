#!/usr/bin/python3
"""Outside check of the core SDF GMM statistics with statsmodels' own GMM machinery
(statsmodels.sandbox.regression.gmm.LinearIVGMM, Debian python3-statsmodels), not with this
project's numpy scripts.

The linear SDF moment E[R_t (1 - x_t'b)] = 0 is the linear IV moment E[z_t (y_t - x_t'b)] = 0 with
y_t = 1, instruments z_t = R_t (N) and regressors x_t = f_t (uncentred form) or f_t - mean(f)
(centred form with the factor means taken as known). statsmodels then supplies:
  b-hat       LinearIVGMM.fit: closed-form weighted normal equations; maxiter = 1 is the first stage
              with the identity weighting, 2 the second stage (W = S(b1)^-1), n iterated GMM;
  S           calc_weightmatrix(weights_method='hac', wargs={'maxlag': L, 'centered': False}):
              Bartlett-weighted sum of autocovariances of the moment series (S_hac_simple / T);
  Var(b-hat)  calc_cov_params (= cov_params()) with has_optimal_weights=False: the sandwich
              (G'WG)^-1 G'W S(b-hat) W G (G'WG)^-1 / T;
  J           jtest(): T g(b-hat)' W g(b-hat) with the W of the last step, chi2(N - K).

usage: /usr/bin/python3 statsmodels_gmm.py IN.json OUT.json
IN: list of {returns: T x N, factors: T x K, form: 'uncentred' | 'centred-known', stage:
    'first' | 'second' | 'iterated', lags: int, iterations: int (iterated only)}
OUT: list of {b, covB, J: {stat, df, p} (second/iterated only), iterations}
"""
import json
import sys
import warnings

import numpy as np
from statsmodels.sandbox.regression.gmm import LinearIVGMM


def one(inp):
    R = np.array(inp['returns'], dtype=float)
    F = np.array(inp['factors'], dtype=float)
    T, N = R.shape
    X = F - F.mean(axis=0) if inp['form'] == 'centred-known' else F
    model = LinearIVGMM(np.ones(T), X, R)
    model.epsilon_iter = 0.0  # no early stop: exactly the requested number of weighting updates
    maxiter = {'first': 1, 'second': 2}.get(inp['stage'], int(inp.get('iterations', 100)))
    wargs = {'maxlag': int(inp['lags']), 'centered': False}
    with warnings.catch_warnings():
        warnings.simplefilter('ignore')
        res = model.fit(np.zeros(X.shape[1]), maxiter=maxiter, inv_weights=np.eye(N), weights_method='hac',
                        wargs=wargs, has_optimal_weights=False, optim_args={'disp': 0})
        cov = res.calc_cov_params(model.momcond(res.params), model.gradient_momcond(res.params), weights=res.weights,
                                  has_optimal_weights=False, weights_method='hac', wargs=wargs)
        # the results object's own cov_params uses the same options (has_optimal_weights=False from fit)
        assert np.allclose(cov, res.cov_params(), rtol=1e-12, atol=0)
        out = {'b': res.params.tolist(), 'covB': np.asarray(cov).tolist(), 'iterations': maxiter - 1}
        if inp['stage'] != 'first':
            j, p, df = res.jtest()
            out['J'] = {'stat': float(j), 'df': int(df), 'p': float(p)}
    return out


def main():
    data = json.load(open(sys.argv[1]))
    json.dump([one(d) for d in data], open(sys.argv[2], 'w'))


if __name__ == '__main__':
    main()
