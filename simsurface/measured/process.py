"""Processing of a measured curve: symmetrization in B and removal of the smooth background.

Symmetrization
--------------
A two-terminal conductance obeys G(B) = G(−B) (Onsager; Büttiker, PRL 57, 1761 (1986)); a
four-terminal resistance obeys the reciprocity R_ij,kl(B) = R_kl,ij(−B) (Büttiker 1986). Hence

* one file measured at both signs of B: the field-even part y_s(B) = [y(B) + y(−B)]/2, kept at the
  measured points with B ≥ 0 inside the range covered at both signs (the negative half is a mirror copy
  and adds no information, so it is not analysed twice);
* a reciprocal pair of four-terminal files (current and voltage contacts swapped), measured at the
  same signs of B: y_s(B) = [R_ij,kl(B) + R_kl,ij(B)]/2, which by reciprocity is the field-even part of
  R_ij,kl. When the pair also covers both signs, :func:`reciprocity_deviation` measures how well
  R_ij,kl(B) = R_kl,ij(−B) holds in the data.

The partner value at a field where nothing was measured is linearly interpolated between the
neighbouring points (after averaging points taken at identical fields, e.g. up and down sweeps).

Background
----------
The smooth magnetoresistance (classical, bulk, weak antilocalization tail) is removed by a local
quadratic regression with tricube weights (the locally weighted regression of Cleveland, J. Am. Stat.
Assoc. 74, 829 (1979), without its robustness iterations). At each point the fit uses the points within
a window of full width ``window_T`` centred on it; near the ends of the range the window stops at the
data and the fit over that first (last) window is evaluated off-centre, like a Savitzky–Golay filter's
end treatment. With the window set to 5 h/e periods the filter keeps 98–105 % of a sinusoid whose
period lies within 0.8 … 1.25 of the one the window was set for, on even or random field points over
ranges of 4–20 periods (the deviation comes from the ends of the range); this fraction is computed for every analysed curve by
:func:`background_transfer` and reported as ``background_transfer_he``. Shorter windows remove part of
the h/e signal (a one-period window removes most of it), longer ones leave more background. A sharp
feature narrower than the window (the weak-antilocalization cusp at B = 0) is not removed: exclude it
with ``exclude_below_T``.
"""

from __future__ import annotations

import numpy as np
from scipy import sparse

from ..errors import InputError


def merge_duplicates(field_T: np.ndarray, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sort by field and average the values measured at identical fields.

    Returns
    -------
    field_T, values : ndarray, shape (n_unique,)
    """
    order = np.argsort(field_T, kind="stable")
    f, v = field_T[order], values[order]
    uniq, inverse, counts = np.unique(f, return_inverse=True, return_counts=True)
    sums = np.bincount(inverse, weights=v)
    return uniq, sums / counts


def both_signs_overlap_T(field_T: np.ndarray) -> float:
    """Largest |B| that is covered at both signs (0 when only one sign is measured)."""
    return float(max(0.0, min(-np.min(field_T), np.max(field_T))))


def covers_both_signs(field_T: np.ndarray, min_fraction: float = 0.5) -> bool:
    """True when the range measured at both signs is at least ``min_fraction`` of the largest |B|."""
    big = float(np.max(np.abs(field_T)))
    return big > 0 and both_signs_overlap_T(field_T) >= min_fraction * big


def symmetrize(field_T: np.ndarray, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Field-even part [y(B) + y(−B)]/2 at the measured points with 0 ≤ B ≤ overlap.

    Parameters
    ----------
    field_T, values : ndarray, shape (n,)
        Measured points in any order, both signs of B.

    Returns
    -------
    field_T, values : ndarray, shape (m,)
        Points with B ≥ 0, sorted by field.
    """
    overlap = both_signs_overlap_T(field_T)
    if overlap <= 0:
        raise InputError("symmetrize: the data cover only one sign of B; measure both signs or use "
                         "--no-symmetrize (or a reciprocal four-terminal pair)")
    fu, vu = merge_duplicates(field_T, values)
    keep = (field_T >= 0) & (field_T <= overlap)
    f = field_T[keep]
    sym = 0.5 * (values[keep] + np.interp(-f, fu, vu))
    order = np.argsort(f, kind="stable")
    return f[order], sym[order]


def symmetrize_reciprocal(field_T: np.ndarray, values: np.ndarray, partner_field_T: np.ndarray,
                          partner_values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """[R_ij,kl(B) + R_kl,ij(B)]/2 at the points of the first file inside the partner's range.

    By reciprocity (Büttiker, PRL 57, 1761 (1986)) this is the field-even part of R_ij,kl.
    """
    fu, vu = merge_duplicates(partner_field_T, partner_values)
    keep = (field_T >= fu[0]) & (field_T <= fu[-1])
    if keep.sum() < 2:
        raise InputError("--reciprocal: the two files share no field range; a reciprocal pair must be "
                         "measured over the same fields")
    f = field_T[keep]
    sym = 0.5 * (values[keep] + np.interp(f, fu, vu))
    order = np.argsort(f, kind="stable")
    return f[order], sym[order]


def reciprocity_deviation(field_T: np.ndarray, values: np.ndarray, partner_field_T: np.ndarray,
                          partner_values: np.ndarray) -> float | None:
    """Root-mean-square of R_ij,kl(B) − R_kl,ij(−B) where both are measured, or None.

    Reciprocity (Büttiker 1986) says it is zero up to noise; compare it with the noise and the
    oscillation amplitude.
    """
    fu, vu = merge_duplicates(-partner_field_T, partner_values)
    keep = (field_T >= fu[0]) & (field_T <= fu[-1])
    if keep.sum() < 2 or not covers_both_signs(field_T) or not covers_both_signs(partner_field_T):
        return None
    diff = values[keep] - np.interp(field_T[keep], fu, vu)
    return float(np.sqrt(np.mean(diff**2)))


def background_operator(field_T: np.ndarray, window_T: float, degree: int = 2) -> sparse.csr_matrix:
    """Linear operator M of the local polynomial background: background = M @ values.

    Locally weighted polynomial regression with tricube weights (Cleveland 1979). At each point the
    fit uses the points within a window of full width ``window_T`` centred on it, shifted to stay inside
    the data near the ends and then evaluated off-centre (the whole range is used when it is shorter
    than the window).

    Parameters
    ----------
    field_T : ndarray, shape (n,)
        Fields, sorted ascending (uneven spacing is fine).
    window_T : float
        Full width of the window in T.
    degree : int
        Degree of the local polynomial (2 by default).

    Returns
    -------
    scipy.sparse.csr_matrix, shape (n, n)
    """
    x = np.asarray(field_T, float)
    if np.any(np.diff(x) < 0):
        raise ValueError("field_T must be sorted ascending")
    lo_all, hi_all = x[0], x[-1]
    half = 0.5 * min(window_T, hi_all - lo_all)
    rows, cols, vals = [], [], []
    for i, x0 in enumerate(x):
        lo = min(max(x0 - half, lo_all), hi_all - 2 * half)
        hi = lo + 2 * half
        a, b = np.searchsorted(x, lo, "left"), np.searchsorted(x, hi, "right")
        # weights centred on the window, not on x0: at the ends of the range the fit over the first
        # (last) window is evaluated off-centre, which tracks the oscillation far less than a one-sided kernel
        centre = lo + half
        u = (x[a:b] - centre) / (half * (1 + 1e-9))
        w = np.sqrt((1 - np.abs(u) ** 3) ** 3)
        deg = min(degree, b - a - 1)
        design = np.vander(u, deg + 1, increasing=True) * w[:, None]
        at = np.vander(np.array([(x0 - centre) / (half * (1 + 1e-9))]), deg + 1, increasing=True)[0]
        # fitted value at x0 = at · (weighted pseudo-inverse) · (w y)
        vals.append(at @ np.linalg.pinv(design) * w)
        rows.append(np.full(b - a, i))
        cols.append(np.arange(a, b))
    return sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                             shape=(x.size, x.size))


def local_quadratic_background(field_T: np.ndarray, values: np.ndarray, window_T: float,
                               degree: int = 2) -> np.ndarray:
    """Smooth background at every point (see :func:`background_operator`); shape (n,)."""
    return background_operator(field_T, window_T, degree) @ np.asarray(values, float)


def background_transfer(field_T: np.ndarray, window_T: float, period_T: float, degree: int = 2) -> float:
    """Fraction of a sinusoid's amplitude (period ``period_T``) that survives background removal.

    The filter of :func:`local_quadratic_background` is applied to cos and sin of 2πB/period on the
    given points; the amplitude left is measured by a least-squares fit at that period.
    """
    x = np.asarray(field_T, float)
    w = 2 * np.pi * x / period_T
    design = np.column_stack([np.cos(w), np.sin(w), np.ones_like(x)])
    op = background_operator(x, window_T, degree)
    kept = []
    for s in (np.cos(w), np.sin(w)):
        r = s - op @ s
        c = np.linalg.lstsq(design, r, rcond=None)[0]
        kept.append(np.hypot(c[0], c[1]))
    return float(np.mean(kept))
