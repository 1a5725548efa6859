"""The demeaned linear SDF model (m = 1 - b'(f - mu)) estimated as deflator's `fit` does it,
written the straightforward way with numpy, for the benchmarks' anchors:

  first stage   mu = fbar, b by least squares of Rbar on C = cov(R, f) (W = I on the N assets)
  S             Newey-West (Bartlett 1 - j/(L+1)), centred, divided by T, of the N + K moments
                at the first-stage estimate
  second stage  (b, mu) minimising g' S^-1 g: Newton with the exact Hessian, Gauss-Newton with
                step halving when Newton does not lower it, to a step below 1e-12
  inference     Var(theta) = (d' S^-1 d)^-1 / T; J = T g' S^-1 g; Var(g) = (S - d (d'S^-1 d)^-1 d') / T,
                the pricing-error statistic g_A' Var(g_A)^+ g_A (numpy.linalg.pinv)
  HJ distance   first stage with W = E[RR']^-1 on the assets, and the Jagannathan-Wang weights:
                eigenvalues of C^-1 (T Var(g_A)) C^-T, E[RR'] = C C' (numpy.linalg.eigvalsh)
  bound         the maximum Sharpe ratio sqrt(mu_e' Sigma^-1 mu_e) of the test assets

All linear algebra goes through numpy (its BLAS and LAPACK). Importing this module loads
only numpy.
"""
import numpy as np


def newey_west(u, L):
    n = u.shape[0]
    u = u - u.mean(axis=0)
    S = u.T @ u / n
    for j in range(1, L + 1):
        G = u[j:].T @ u[:-j] / n
        S = S + (1.0 - j / (L + 1.0)) * (G + G.T)
    return S


def auto_lags(T):
    return int(np.floor(4 * (T / 100.0) ** (2.0 / 9.0)))


def second_stage_fit(R, f, L, hj=True):
    """R: T x N excess returns, f: T x K factors. Returns a dict of the estimates."""
    n, N = R.shape
    K = f.shape[1]
    Rbar = R.mean(axis=0)
    fbar = f.mean(axis=0)
    C = R.T @ (f - fbar) / n
    b = np.linalg.lstsq(C, Rbar, rcond=None)[0]
    mu = fbar.copy()

    def moments(b, mu):
        m = 1.0 - (f - mu) @ b
        return np.hstack([R * m[:, None], f - mu])

    def jac(b, mu):
        d = np.zeros((N + K, 2 * K))
        d[:N, :K] = -(R.T @ (f - mu)) / n
        d[:N, K:] = np.outer(Rbar, b)
        d[N:, K:] = -np.eye(K)
        return d

    S = newey_west(moments(b, mu), L)
    Lc = np.linalg.cholesky(S)

    def whiten(x):
        return np.linalg.solve(Lc, x) if x.ndim == 1 else np.linalg.solve(Lc, x)

    theta = np.concatenate([b, mu])

    def objective(th):
        g = moments(th[:K], th[K:]).mean(axis=0)
        gw = whiten(g)
        return gw @ gw, g

    q, g = objective(theta)
    for _ in range(100):
        d = jac(theta[:K], theta[K:])
        dw = whiten(d)
        gw = whiten(g)
        grad = dw.T @ gw
        gn = dw.T @ dw
        Sinv_g = np.linalg.solve(Lc.T, gw)
        rho = Sinv_g[:N] @ Rbar
        H = gn.copy()
        H[:K, K:] += rho * np.eye(K)
        H[K:, :K] += rho * np.eye(K)
        step = np.linalg.solve(H, grad)
        qn, gnew = objective(theta - step)
        if not qn <= q * (1 + 1e-12):
            step = np.linalg.solve(gn, grad)
            t = 1.0
            qn, gnew = objective(theta - step)
            while not qn <= q * (1 + 1e-12) and t > 1e-10:
                t /= 2
                qn, gnew = objective(theta - t * step)
            step = t * step
        theta = theta - step
        q, g = qn, gnew
        if np.max(np.abs(step)) <= 1e-12 * max(1.0, np.max(np.abs(theta))):
            break
    d = jac(theta[:K], theta[K:])
    dw = whiten(d)
    info = dw.T @ dw
    V = np.linalg.inv(info) / n
    J = n * q
    # Var(g) = (S - d (d'S^-1 d)^-1 d') / T; the asset block's pseudo-inverse statistic
    Vg = (S - d @ np.linalg.solve(info, d.T)) / n
    gA = g[:N]
    stat = gA @ np.linalg.pinv(Vg[:N, :N], hermitian=True) @ gA
    out = {"theta": theta, "se": np.sqrt(np.diag(V)), "J": J, "pricingStat": stat, "alphaSe": np.sqrt(np.maximum(np.diag(Vg)[:N], 0))}
    if hj:
        ERR = R.T @ R / n
        Cc = np.linalg.cholesky(ERR)
        X = np.linalg.solve(Cc, C)
        y = np.linalg.solve(Cc, Rbar)
        bh = np.linalg.lstsq(X, y, rcond=None)[0]
        e = y - X @ bh
        out["hj"] = np.sqrt(e @ e)
        # Jagannathan-Wang weights at the HJ estimate (fixed W = E[RR']^-1, mu held at fbar)
        Sh = newey_west(moments(bh, fbar), L)
        dA = jac(bh, fbar)
        W = np.zeros((N + K, N + K))
        W[:N, :N] = np.linalg.inv(ERR)
        # first-stage Var(g) with the factor means pinned: g_A = Rbar - C b, b = (C'WC)^-1 C'W Rbar
        A = np.eye(N) - C @ np.linalg.solve(C.T @ W[:N, :N] @ C, C.T @ W[:N, :N])
        VgA = A @ Sh[:N, :N] @ A.T
        Y = np.linalg.solve(Cc, VgA)
        B = np.linalg.solve(Cc, Y.T)
        out["hjWeights"] = np.linalg.eigvalsh((B + B.T) / 2)[::-1][: N - K]
        _ = dA
        Sigma = np.cov(R, rowvar=False, bias=True)
        out["maxSharpe"] = np.sqrt(Rbar @ np.linalg.solve(Sigma, Rbar))
    return out
