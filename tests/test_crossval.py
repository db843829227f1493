"""The Gram-matrix grouped ridge (shiftcheck.predict.crossval) against the direct row-wise solve
(shiftcheck.predict.calibrate.fit_rows / loo_rows: numpy least squares on the rows themselves),
and ridge-strength selection on data where the answer is known. Synthetic regression data
(common practice, no source)."""
import numpy as np

from shiftcheck.predict.calibrate import fit_rows, loo_rows, tail_scale
from shiftcheck.predict.crossval import GroupedRows, choose_lambda, pooled_error


def _data(seed=0, n_groups=6, per=80, k=5, noise=0.3):
    rng = np.random.default_rng(seed)
    X = np.column_stack([np.ones(n_groups * per), rng.normal(size=(n_groups * per, k - 1))])
    beta = rng.normal(size=k)
    d = np.repeat(np.arange(n_groups), per)
    offs = rng.normal(scale=0.5, size=n_groups)
    y = X @ beta + offs[d] + rng.normal(scale=noise, size=d.size)
    w = np.where(d % 2, 0.5, 1.0)
    names = ["const"] + [f"x{i}" for i in range(k - 1)]
    return names, X, y, d, w, beta


def test_gram_fit_equals_row_fit():
    names, X, y, d, w, _ = _data()
    rows = GroupedRows(names, X, y, d, w, d)
    for lam in (0.1, 10.0, 300.0):
        b_rows, off_rows = fit_rows(names, X, y, d, w, lam, iterations=2)
        b_gram, off_gram = rows.fit(lam, iterations=2)
        assert np.allclose(b_rows, b_gram, atol=1e-8)
        assert np.allclose([off_rows[k] for k in sorted(off_rows)], [off_gram[k] for k in sorted(off_gram)], atol=1e-8)


def test_gram_loo_equals_row_loo():
    names, X, y, d, w, _ = _data(seed=1)
    rows = GroupedRows(names, X, y, d, w, d)
    assert np.allclose(rows.loo(30.0), loo_rows(names, X, y, d, w, d, 30.0), atol=1e-8)
    # a subset reuses the sums and equals a fresh object built on the same rows
    keep = d != 2
    sub = rows.subset(keep)
    fresh = GroupedRows(names, X[keep], y[keep], d[keep], w[keep], d[keep])
    assert np.allclose(sub.fit(10.0)[0], fresh.fit(10.0)[0], atol=1e-10)


def test_choose_lambda_prefers_weak_penalty_for_clean_data_and_strong_for_pure_noise():
    names, X, y, d, w, _ = _data(seed=2, noise=0.05)
    lam, errs = choose_lambda(GroupedRows(names, X, y, d, w, d), [0.01, 1e4])
    assert lam == 0.01 and errs[0.01] < errs[1e4]
    rng = np.random.default_rng(3)
    y_noise = rng.normal(size=y.size)  # no relation to X: shrinking the slopes to zero is best
    lam, _ = choose_lambda(GroupedRows(names, X, y_noise, d, w, d), [0.01, 1e4])
    assert lam == 1e4


def test_tail_scale_recovers_normal_sigma():
    # For normal residuals the 99.73 % quantile of |r| / 3 is sigma (normal tables).
    rng = np.random.default_rng(4)
    r = rng.normal(scale=0.7, size=200_000)
    g = np.repeat(np.arange(4), r.size // 4)
    assert abs(tail_scale(r, np.zeros_like(r), g, 0.9973) - 0.7) < 0.02
    assert abs(pooled_error(r, np.zeros_like(r), np.ones_like(r), g) - 0.7) < 0.01


def test_block_factors_equal_an_augmented_least_squares_solve():
    # Ridge with per-column strengths lam * f_j on standardised columns is least squares on the
    # rows augmented by sqrt(lam * f_j) e_j (textbook identity, common practice, no source); solved
    # here independently with numpy.linalg.lstsq, no referencing offsets (one dataset).
    from shiftcheck.predict.crossval import column_blocks
    rng = np.random.default_rng(5)
    names = ["const", "res:ALA", "conf:phi_cos1", "conf:phi_cos1*psi_sin1", "conf:GLY:phi_cos1",
             "conf:prev:psi_cos1", "conf:psi_prev_cos1", "conf:TYPE:ALA:phi_cos1", "hb:n_hb", "ef:ef_bb"]
    assert list(column_blocks(names)) == ["const", "residue", "phi_psi", "phi_psi", "class",
                                          "neighbour_torsion", "neighbour_torsion", "type", "hbond", "efield"]
    n = 300
    X = np.column_stack([np.ones(n), rng.normal(size=(n, len(names) - 1)) * rng.uniform(0.5, 3, len(names) - 1)])
    y = X @ rng.normal(size=len(names)) + rng.normal(scale=0.5, size=n)
    d = np.zeros(n, int)
    w = np.ones(n)
    bf = {"phi_psi": 10.0, "class": 0.1, "hbond": 100.0}
    lam = 30.0
    got, _ = GroupedRows(names, X, y, d, w, d, bf).fit(lam, iterations=0)
    sd = X.std(axis=0)
    sd[0] = 1.0
    f = np.array([0.0, 1, 10, 10, 0.1, 1, 1, 1, 100, 1])
    Z = X / sd
    A = np.vstack([Z, np.diag(np.sqrt(lam * f + 1e-10))])
    ref = np.linalg.lstsq(A, np.r_[y, np.zeros(len(names))], rcond=None)[0] / sd
    assert np.allclose(got, ref, atol=1e-6)
    # no factors is the plain fit; other factors change it
    plain = GroupedRows(names, X, y, d, w, d)
    assert np.allclose(plain.with_block_factors({}).fit(lam, 0)[0], plain.fit(lam, 0)[0])
    assert not np.allclose(plain.with_block_factors(bf).fit(lam, 0)[0], plain.fit(lam, 0)[0])


def test_huber_fit_equals_direct_minimisation_of_the_huber_loss():
    """With a negligible ridge strength and no referencing offsets, the IRLS fit of GroupedRows
    (huber=(c, passes)) is the Huber M-estimate: the minimum of sum_i w_i rho_c(r_i / s) with
    s = 1.4826 MAD of the least-squares residuals (Huber 1964, Ann. Math. Stat. 35:73, loss from
    memory), found here independently by scipy.optimize.minimize (BFGS on the loss itself)."""
    from scipy.optimize import minimize

    rng = np.random.default_rng(3)
    n = 400
    X = np.column_stack([np.ones(n), rng.normal(size=(n, 3))])
    y = X @ np.array([0.5, 1.0, -2.0, 0.3]) + rng.standard_t(2, size=n)      # heavy tails
    w = rng.uniform(0.5, 1.5, n)
    d = np.repeat(np.arange(4), n // 4)
    names = ["const", "a", "b", "c"]
    c = 1.345
    rows = GroupedRows(names, X, y, d, w, d, huber=(c, 60))
    beta, _ = rows.fit(1e-9, iterations=0)
    beta_ls, _ = rows.with_huber(None).fit(1e-9, iterations=0)
    s = 1.4826 * np.median(np.abs(y - X @ beta_ls))

    def loss(b):
        r = np.abs(y - X @ b) / s
        return float(np.sum(w * np.where(r <= c, 0.5 * r * r, c * r - 0.5 * c * c)))

    ref = minimize(loss, beta_ls, method="BFGS", options={"gtol": 1e-10}).x
    assert np.allclose(beta, ref, atol=2e-4)
    assert not np.allclose(beta, beta_ls, atol=1e-2)      # the loss matters on these data


def test_huber_fit_resists_gross_errors_and_loo_uses_it():
    """5 % of the rows shifted by 15 (misassigned shifts): the Huber fit's slope stays near the
    truth, least squares' does not (common practice, no source); leave-one-group-out predictions
    of the Huber rows differ from the squared-loss ones."""
    rng = np.random.default_rng(8)
    n = 600
    x = rng.normal(size=n)
    X = np.column_stack([np.ones(n), x])
    y = 2.0 * x + rng.normal(scale=0.3, size=n)
    bad = rng.choice(n, n // 20, replace=False)
    y[bad] += 15.0 * np.sign(x[bad])
    d = np.repeat(np.arange(6), n // 6)
    rows = GroupedRows(["const", "x"], X, y, d, np.ones(n), d, huber=(1.345, 20))
    b_h, _ = rows.fit(1e-6, iterations=1)
    b_ls, _ = rows.with_huber(None).fit(1e-6, iterations=1)
    assert abs(b_h[1] - 2.0) < 0.1 < abs(b_ls[1] - 2.0)
    assert not np.allclose(rows.loo(1e-6, 1), rows.with_huber(None).loo(1e-6, 1))
