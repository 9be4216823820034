"""Small-matrix algebra in the batch-last layout (private).

Inside the core every batched array keeps its batch axis *last*: a stack of N
3x3 matrices is (3, 3, N). Products and small factorisations are then a few
element-wise operations on contiguous length-N arrays, which numpy does far
faster than ``matmul`` or ``linalg`` on (N, 3, 3) stacks.
"""

import numpy as np

__all__ = ["matmul", "matvec", "const_matmul", "const_matvec", "cross", "dot", "transpose",
           "cholesky_forward", "sym_eig", "lift", "pmatmul", "pmatvec"]


def matmul(a, b):
    """(..., i, j, N) @ (..., j, k, N) -> (..., i, k, N), leading axes broadcast.

    Written as a sum of element-wise products over the (small) contracted axis: for
    batch-last stacks this is much faster than ``einsum`` or ``matmul``.
    """
    out = a[..., :, 0, None, :] * b[..., None, 0, :, :]
    for j in range(1, a.shape[-2]):
        out = out + a[..., :, j, None, :] * b[..., None, j, :, :]
    return out


def matvec(a, v):
    """(..., i, j, N) @ (..., j, N) -> (..., i, N), leading axes broadcast."""
    out = a[..., :, 0, :] * v[..., None, 0, :]
    for j in range(1, a.shape[-2]):
        out = out + a[..., :, j, :] * v[..., None, j, :]
    return out


def const_matmul(a, b):
    """(i, j, N) @ constant (j, k) -> (i, k, N)."""
    return np.einsum("ijn,jk->ikn", a, b)


def const_matvec(a, v):
    """(i, j, N) @ constant (j,) -> (i, N)."""
    return np.einsum("ijn,j->in", a, v)


def lift(x, ndim):
    """A parameter array with a batch axis: ``x[..., None]`` if it has ``ndim`` axes (one set
    of parameters for every configuration), else ``x`` itself (per-configuration parameters,
    batch already last)."""
    return x[..., None] if x.ndim == ndim else x


def pmatmul(a, b):
    """Product of parameter matrices, each constant (i, j) or per configuration (i, j, N)."""
    if a.ndim == 2 and b.ndim == 2:
        return a @ b
    if b.ndim == 2:
        return const_matmul(a, b)
    if a.ndim == 2:
        return np.einsum("ij,jkn->ikn", a, b)
    return matmul(a, b)


def pmatvec(a, v):
    """(i, j) or (i, j, N) @ (j,) or (j, N): constant or per-configuration parameters."""
    if a.ndim == 2 and v.ndim == 1:
        return a @ v
    if v.ndim == 1:
        return const_matvec(a, v)
    if a.ndim == 2:
        return a @ v
    return matvec(a, v)


def cross(a, b):
    """Cross product along axis -2 of (..., 3, N) arrays (broadcasting)."""
    a0, a1, a2 = a[..., 0, :], a[..., 1, :], a[..., 2, :]
    b0, b1, b2 = b[..., 0, :], b[..., 1, :], b[..., 2, :]
    return np.stack([a1 * b2 - a2 * b1, a2 * b0 - a0 * b2, a0 * b1 - a1 * b0], axis=-2)


def dot(a, b):
    """Dot product along axis -2 of (..., 3, N) arrays."""
    return np.sum(a * b, axis=-2)


def transpose(a):
    """Swap the two matrix axes of (i, j, N)."""
    return np.swapaxes(a, 0, 1)


def cholesky_forward(m, b):
    """Y = L^-1 B for M = L L^T, M (n, n, N) symmetric positive definite, B (n, k, N).

    Returns Y (n, k, N) and the pivots L_jj^2 (n, N) (non-positive where M is singular
    at that configuration; Y is then not finite there). Then B^T M^-1 B = Y^T Y.
    """
    n = m.shape[0]
    low = [[None] * n for _ in range(n)]
    pivots = []
    with np.errstate(divide="ignore", invalid="ignore"):
        for j in range(n):
            s = m[j, j] - sum((low[j][k] ** 2 for k in range(j)), np.zeros_like(m[j, j]))
            pivots.append(s)
            d = np.sqrt(s)
            low[j][j] = d
            for i in range(j + 1, n):
                t = m[i, j] - sum((low[i][k] * low[j][k] for k in range(j)), np.zeros_like(s))
                low[i][j] = t / d
        ys = []
        for i in range(n):
            t = b[i] - sum((low[i][j] * ys[j] for j in range(i)), np.zeros_like(b[i]))
            ys.append(t / low[i][i])
    return np.stack(ys), np.stack(pivots)


def _eig2(a, b, d):
    """Eigen-decomposition of [[a, b], [b, d]] (arrays (N,)): ascending values, vectors (2, 2, N)."""
    theta = 0.5 * np.arctan2(2.0 * b, a - d)     # rotation that diagonalises (Jacobi angle)
    c, s = np.cos(theta), np.sin(theta)
    big = a * c * c + 2.0 * b * c * s + d * s * s      # value along (c, s)
    small = a * s * s - 2.0 * b * c * s + d * c * c    # value along (-s, c)
    swap = small > big
    lo = np.where(swap, big, small)
    hi = np.where(swap, small, big)
    # columns: eigenvector of lo, then of hi
    v_lo = np.where(swap, np.stack([c, s]), np.stack([-s, c]))
    v_hi = np.where(swap, np.stack([-s, c]), np.stack([c, s]))
    return np.stack([lo, hi]), np.stack([v_lo, v_hi], axis=1)


def _eig3(m):
    """Eigen-decomposition of symmetric (3, 3, N): ascending values (3, N), vectors (3, 3, N).

    Closed-form eigenvalues (trigonometric solution of the characteristic cubic) pick the
    best-separated eigenvalue; its vector comes from the largest cross product of two rows
    of (M - lambda I); the other two from the exact 2x2 problem in its orthogonal
    complement (a Jacobi rotation), which stays well defined for repeated eigenvalues.
    """
    a11, a22, a33 = m[0, 0], m[1, 1], m[2, 2]
    a12, a13, a23 = m[0, 1], m[0, 2], m[1, 2]
    mean = (a11 + a22 + a33) / 3.0
    p1 = a12 * a12 + a13 * a13 + a23 * a23
    p2 = (a11 - mean) ** 2 + (a22 - mean) ** 2 + (a33 - mean) ** 2 + 2.0 * p1
    p = np.sqrt(p2 / 6.0)
    safe_p = np.where(p > 0.0, p, 1.0)
    b = (m - mean * np.eye(3)[:, :, None]) / safe_p
    det_b = (b[0, 0] * (b[1, 1] * b[2, 2] - b[1, 2] * b[2, 1])
             - b[0, 1] * (b[1, 0] * b[2, 2] - b[1, 2] * b[2, 0])
             + b[0, 2] * (b[1, 0] * b[2, 1] - b[1, 1] * b[2, 0]))
    phi = np.arccos(np.clip(det_b / 2.0, -1.0, 1.0)) / 3.0
    l3 = mean + 2.0 * p * np.cos(phi)
    l1 = mean + 2.0 * p * np.cos(phi + 2.0 * np.pi / 3.0)
    l2 = 3.0 * mean - l1 - l3
    low_isolated = (l2 - l1) > (l3 - l2)
    lam = np.where(low_isolated, l1, l3)
    shifted = m - lam * np.eye(3)[:, :, None]
    r0, r1, r2 = shifted[0], shifted[1], shifted[2]
    crosses = np.stack([cross(r0, r1), cross(r0, r2), cross(r1, r2)])   # (3, 3, N)
    norms = np.sum(crosses * crosses, axis=1)                             # (3, N)
    best = np.argmax(norms, axis=0)
    v = np.take_along_axis(crosses, best[None, None, :], axis=0)[0]
    vnorm = np.sqrt(np.take_along_axis(norms, best[None, :], axis=0)[0])
    scale = np.maximum(np.abs(l1), np.abs(l3))
    degenerate = vnorm <= 1e-14 * np.maximum(scale * scale, 1e-300)
    e_x = np.array([1.0, 0.0, 0.0])[:, None]
    v = np.where(degenerate, e_x, v / np.where(degenerate, 1.0, vnorm))
    # orthonormal complement (u, w) of v
    helper = np.where(np.abs(v[0]) < 0.6, e_x, np.array([0.0, 1.0, 0.0])[:, None])
    u = cross(v, helper)
    u = u / np.sqrt(np.sum(u * u, axis=0))
    w = cross(v, u)
    mu = matvec(m, u)
    mw = matvec(m, w)
    vals2, vecs2 = _eig2(np.sum(u * mu, axis=0), np.sum(u * mw, axis=0), np.sum(w * mw, axis=0))
    e_lo = vecs2[0, 0] * u + vecs2[1, 0] * w
    e_hi = vecs2[0, 1] * u + vecs2[1, 1] * w
    lam_v = np.sum(v * matvec(m, v), axis=0)
    vals = np.where(low_isolated, np.stack([lam_v, vals2[0], vals2[1]]),
                    np.stack([vals2[0], vals2[1], lam_v]))
    vecs = np.where(low_isolated, np.stack([v, e_lo, e_hi], axis=1),
                    np.stack([e_lo, e_hi, v], axis=1))
    order = np.argsort(vals, axis=0)
    vals = np.take_along_axis(vals, order, axis=0)
    vecs = np.take_along_axis(vecs, order[None, :, :], axis=1)
    return vals, vecs


def sym_eig(m):
    """Ascending eigenvalues (k, N) and unit eigenvector columns (k, k, N) of symmetric (k, k, N)."""
    k = m.shape[0]
    if k == 1:
        return m[0].copy(), np.ones_like(m)
    if k == 2:
        return _eig2(m[0, 0], 0.5 * (m[0, 1] + m[1, 0]), m[1, 1])
    if k == 3:
        return _eig3(0.5 * (m + transpose(m)))
    vals, vecs = np.linalg.eigh(np.moveaxis(m, -1, 0))
    return np.moveaxis(vals, 0, -1), np.moveaxis(vecs, 0, -1)
