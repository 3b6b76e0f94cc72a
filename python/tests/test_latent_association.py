"""fit_latent_association and the new fields of fit_gains against the
command line's JSON (`allocsim analyze --latent-rank ... --json`, the same
numbers bit for bit), and the latent scores against the rank-2 truth they
were drawn from (numpy)."""
import numpy as np
import pytest

import allocsim
from conftest import write_csv


def rank_two_counts(seed, n=10, m=12, units=50000):
    rng = np.random.default_rng(seed)
    a, b = rng.normal(size=(n, 2)), rng.normal(size=(m, 2))
    log_rate = (a * [1.2, 0.7]) @ b.T + rng.normal(0, 0.3, n)[:, None]
    rate = np.exp(log_rate)
    counts = rng.multinomial(units, (rate / rate.sum()).ravel()).reshape(n, m).astype(float)
    counts[3, :] = 0  # an all-zero row: left out, its scores nan
    return counts, log_rate


def test_latent_fit_equals_the_command_line(cli, tmp_path):
    counts, _ = rank_two_counts(5)
    ours = allocsim.fit_latent_association(counts, rank="auto", max_rank=3)
    theirs = cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts),
                      "--latent-rank", "auto", "--max-latent-rank", "3")
    latent = theirs["gains_reconstruction"]["latent"]
    assert ours.status == latent["status"] == "converged"
    assert ours.rank == latent["rank"] == 2 and ours.rank_chosen_by_bic
    assert list(ours.strengths) == latent["strengths"]
    assert list(ours.strength_standard_errors) == latent["strength_standard_errors"]
    kept = [i for i in range(counts.shape[0]) if i != 3]
    assert np.array_equal(ours.row_scores[kept], np.array(list(latent["row_scores"].values())))
    assert np.isnan(ours.row_scores[3]).all()
    assert np.array_equal(ours.column_scores,
                          np.array(list(latent["column_scores"].values())))
    assert ours.models == theirs["gains_reconstruction"]["models"]
    assert list(ours.models) == ["independence", "latent rank 1", "latent rank 2",
                                 "latent rank 3", "saturated"]
    assert ours.strength_meaning == latent["strength_meaning"]


def test_latent_association_recovers_the_truth_after_row_and_column_effects():
    counts, log_rate = rank_two_counts(8)
    fit = allocsim.fit_latent_association(counts, rank=2)
    kept = np.ones(counts.shape[0], bool)
    kept[3] = False

    def centred(x):
        return x - x.mean(1, keepdims=True) - x.mean(0, keepdims=True) + x.mean()
    ours, truth = centred(fit.association[kept]), centred(log_rate[kept])
    assert np.corrcoef(ours.ravel(), truth.ravel())[0, 1] > 0.99  # numpy.corrcoef
    assert np.isnan(fit.association[3]).all()
    assert np.isclose(fit.coupling.sum(), 1)


def test_latent_rank_is_checked():
    counts, _ = rank_two_counts(2, n=5, m=6)
    with pytest.raises(ValueError, match="rank"):
        allocsim.fit_latent_association(counts, rank=4)  # the saturated rank of 4 x 6
    with pytest.raises(ValueError, match="rank"):
        allocsim.fit_latent_association(counts, rank="two")
    with pytest.raises(TypeError, match="rank"):
        allocsim.fit_latent_association(counts, rank=1.5)
    with pytest.raises(ValueError):
        allocsim.fit_latent_association(counts / counts.sum(), rank="auto")  # BIC needs counts


def test_feature_fit_fields_equal_the_command_line(cli, tmp_path):
    rng = np.random.default_rng(3)
    n, m = 8, 9
    x, y = rng.uniform(0, 3, n), rng.uniform(0, 3, m)
    feature = -(x[:, None] - y[None, :]) ** 2
    plan = np.exp(0.6 * feature)
    counts = rng.multinomial(8000, (plan / plan.sum()).ravel()).reshape(n, m).astype(float)
    ours = allocsim.fit_gains(counts, {"f": feature}, confidence=0.9)
    theirs = cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts),
                      "--features", write_csv(tmp_path / "f.csv", feature),
                      "--confidence", "0.9")["gains_reconstruction"]["features"]
    weight = theirs["weights"][str(tmp_path / "f.csv")]
    assert ours.theta_over_epsilon[0] == weight["weight"]
    assert ours.standard_errors[0] == weight["standard_error"]
    assert ours.interval_low[0] == weight["interval_low"]
    assert ours.interval_high[0] == weight["interval_high"]
    assert ours.interval_low[0] < 0.6 < ours.interval_high[0]
    assert ours.confidence == theirs["confidence"] == 0.9
    assert ours.deviance == theirs["deviance"]
    assert ours.degrees_of_freedom == theirs["degrees_of_freedom"] == n * m - (n + m - 1) - 1
    assert ours.log_likelihood == theirs["log_likelihood"]
    assert np.isclose(ours.aic, -2 * ours.log_likelihood + 2 * (n + m))
