"""fit_gains against a statsmodels Poisson GLM with row and column fixed
effects and the features as covariates (the same log-linear model; Agresti,
Categorical Data Analysis ch. 9): coefficients and standard errors."""
import numpy as np
import pytest
import statsmodels.api as sm

import allocsim
from conftest import sinkhorn


def test_fit_gains_matches_a_poisson_glm():
    rng = np.random.default_rng(41)
    n, m = 9, 11
    x, y = rng.uniform(size=n), rng.uniform(size=m)
    features = [np.outer(x, y), -np.abs(x[:, None] - y[None, :])]
    log_kernel = 3.0 * features[0] + 4.0 * features[1]
    r, c = rng.lognormal(0, 0.4, n), rng.lognormal(0, 0.4, m)
    plan = sinkhorn(log_kernel, r / r.sum(), c / c.sum(), 1.0)
    counts = rng.multinomial(20000, plan.ravel() / plan.sum()).reshape(n, m).astype(float)
    fit = allocsim.fit_gains(counts, {"product": features[0], "distance": features[1]})
    rows, columns = np.repeat(np.arange(n), m), np.tile(np.arange(m), n)
    design = np.column_stack([f.ravel() for f in features] +
                             [np.eye(n)[rows], np.eye(m)[columns][:, 1:]])
    glm = sm.GLM(counts.ravel(), design, family=sm.families.Poisson()).fit(tol=1e-13, maxiter=200)
    assert fit.status == "converged" and fit.names == ["product", "distance"]
    assert np.allclose(fit.theta_over_epsilon, glm.params[:2], rtol=1e-6)
    assert np.allclose(fit.standard_errors, glm.bse[:2], rtol=1e-4)


def test_an_additive_feature_is_refused():
    counts = np.arange(1, 13, dtype=float).reshape(3, 4)
    additive = np.add.outer(np.arange(3.0), np.arange(4.0))
    with pytest.raises(ValueError, match="features"):
        allocsim.fit_gains(counts, [additive])
