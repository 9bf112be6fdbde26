"""Two-body motion over a fixed time: the Kepler drift in universal variables.

Every orbit advances by its own time step through the f and g functions
written with the universal anomaly s and Stumpff's functions c_k(z), so
that elliptic, parabolic and hyperbolic orbits share one code path (Danby
1988, *Fundamentals of Celestial Mechanics*, 2nd ed., Willmann-Bell,
sections 6.9-6.10; equation numbers not quoted). Arrays hold the three
Cartesian components first: positions and velocities are (3, ...) and
everything else broadcasts against ``...``.

Only +, -, *, / and sqrt are used on the hot path (the Stumpff functions
by their power series), so each orbit's result depends on its own numbers
alone and not on how many others share the arrays.
"""

from __future__ import annotations

import math

import numpy as np

#: |z| up to which the truncated power series give c2 and c3 to double precision (a step of
#: 1/20 of a circular orbit has z = (2 pi / 20)^2 = 0.099; longer steps take the quartering path)
SERIES_LIMIT = 0.25
#: number of series terms: the first left out is below 2e-17 of the sum for |z| <= SERIES_LIMIT
_SERIES_TERMS = 7
#: coefficients (-1)^k / (2k + 2)! and (-1)^k / (2k + 3)!, highest power first (Horner)
_C2_COEFFS = tuple((-1) ** k / math.factorial(2 * k + 2) for k in reversed(range(_SERIES_TERMS)))
_C3_COEFFS = tuple((-1) ** k / math.factorial(2 * k + 3) for k in reversed(range(_SERIES_TERMS)))
#: a universal-anomaly step below this fraction of s leaves an error far below double precision
#: after Danby's quartic correction, whose error is of the fourth order in the step
_QUARTIC_DONE = 1e-5
_QUARTIC_RETRIES = 4
_MAX_DOUBLINGS = 64
_MAX_BRACKETED_STEPS = 200


#: the two coefficient lists side by side, one row per power
_SERIES_COEFFS = np.array([_C2_COEFFS, _C3_COEFFS]).T.copy()


def stumpff_c2_c3_series(z, out=None):
    """Stumpff's c2(z) and c3(z) by their power series (Danby 1988, section 6.9).

    c2(z) = sum_k (-z)^k / (2k+2)!, c3(z) = sum_k (-z)^k / (2k+3)!, nine
    terms each by Horner's rule, both at once: exact to rounding for
    |z| <= SERIES_LIMIT. For z > 0, c2 = (1 - cos sqrt z) / z and
    c3 = (sqrt z - sin sqrt z) / z^(3/2).

    Parameters
    ----------
    z : ndarray
        Argument (beta s^2, dimensionless).
    out : ndarray, optional
        Output shaped (2, *z.shape).

    Returns
    -------
    ndarray, shape (2, *z.shape)
        c2(z) and c3(z).
    """
    z = np.asarray(z, dtype=float)
    out = np.empty((2,) + z.shape) if out is None else out
    column = (2,) + (1,) * z.ndim
    out[...] = _SERIES_COEFFS[0].reshape(column)
    for coeffs in _SERIES_COEFFS[1:]:
        out *= z
        out += coeffs.reshape(column)
    return out


def stumpff_c0_to_c3(z):
    """Stumpff's c0 ... c3 for any real z (Danby 1988, section 6.9).

    The argument is divided by 4 until |z| <= SERIES_LIMIT, c2 and c3 come
    from the series, c0 = 1 - z c2, c1 = 1 - z c3, and the quadrupling
    relations c0(4z) = 2 c0^2 - 1, c1(4z) = c0 c1, c2(4z) = c1^2 / 2,
    c3(4z) = (c2 + c0 c3) / 4 bring them back, element by element.

    Parameters
    ----------
    z : ndarray
        Argument.

    Returns
    -------
    tuple of ndarray
        c0, c1, c2, c3.
    """
    z = np.asarray(z, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        quarterings = np.where(np.abs(z) > SERIES_LIMIT,
                               np.ceil(np.log(np.abs(z) / SERIES_LIMIT) / math.log(4.0)), 0.0)
    quarterings = np.nan_to_num(quarterings, nan=0.0, posinf=0.0).astype(int)
    reduced = z / 4.0 ** quarterings
    c2, c3 = stumpff_c2_c3_series(reduced)
    c0 = 1.0 - reduced * c2
    c1 = 1.0 - reduced * c3
    for _ in range(int(quarterings.max(initial=0))):
        more = quarterings > 0
        c0_new = np.where(more, 2.0 * c0 * c0 - 1.0, c0)
        c1_new = np.where(more, c0 * c1, c1)
        c2_new = np.where(more, 0.5 * c1 * c1, c2)
        c3 = np.where(more, 0.25 * (c2 + c0 * c3), c3)
        c0, c1, c2 = c0_new, c1_new, c2_new
        quarterings = quarterings - more
    return c0, c1, c2, c3


class DriftWork:
    """Work arrays of :func:`kepler_drift` for orbits shaped ``shape`` (made once, used every step).

    Temporaries of this size allocated and freed on every call are, with
    glibc, often paged in afresh (a dask worker, for one, lowers malloc's
    trim threshold), which made the drift up to half again as slow.
    """

    _NAMES = ("r0", "vv", "eta0", "beta", "zeta0", "s", "newton", "ds", "f", "f1", "f2", "f3", "d",
              "z", "t", "g0", "g1", "a", "b", "r")

    def __init__(self, shape):
        self.shape = tuple(shape)
        for name in self._NAMES:
            setattr(self, name, np.empty(self.shape))
        self.g23 = np.empty((2,) + self.shape)
        self.g2, self.g3 = self.g23
        self.slow = np.empty(self.shape, dtype=bool)
        self.vectors = tuple(np.empty((3,) + self.shape) for _ in range(3))


def _stumpff_g(work: DriftWork, s, beta) -> DriftWork:
    """Stumpff's G_k(beta, s) = s^k c_k(beta s^2), k = 0..3, into ``work.g0`` ... ``work.g3``."""
    z, t = work.z, work.t
    np.multiply(s, s, out=t)                         # s^2
    np.multiply(beta, t, out=z)
    if np.greater(np.abs(z, out=work.a), SERIES_LIMIT, out=work.slow).any():   # long steps, fast hyperbolae
        c0, c1, c2, c3 = stumpff_c0_to_c3(z)
        work.g23[0], work.g23[1] = c2, c3
        np.copyto(work.g0, c0)
        np.copyto(work.g1, c1)
    else:
        stumpff_c2_c3_series(z, work.g23)
        np.multiply(z, work.g2, out=work.g0)
        np.subtract(1.0, work.g0, out=work.g0)       # c0 = 1 - z c2
        np.multiply(z, work.g3, out=work.g1)
        np.subtract(1.0, work.g1, out=work.g1)       # c1 = 1 - z c3
    work.g1 *= s                                     # G1 = s c1
    work.g2 *= t                                     # G2 = s^2 c2
    t *= s
    work.g3 *= t                                     # G3 = s^3 c3
    return work


def _advance_g(work: DriftWork, ds, beta) -> None:
    """G_k at s + ds from their values at s, by Taylor's series to ds^3.

    dG_k/ds = G_(k-1) and dG_0/ds = -beta G_1 (Danby 1988, section 6.9);
    for |ds| <= _QUARTIC_DONE |s| the first term left out is below 1e-20 of
    G_k. G_0 is not carried on (the f and g functions do not use it).
    """
    g0, g1, g2, g3 = work.g0, work.g1, work.g2, work.g3
    half = np.multiply(ds, 0.5, out=work.z)
    third = np.multiply(ds, 1.0 / 3.0, out=work.t)
    beta_g1 = np.multiply(beta, g1, out=work.a)
    step = np.multiply(third, g0, out=work.b)        # G3 + ds (G2 + ds/2 (G1 + ds/3 G0))
    step += g1
    step *= half
    step += g2
    step *= ds
    g3 += step
    np.multiply(third, beta_g1, out=step)            # G2 + ds (G1 + ds/2 (G0 - ds/3 beta G1))
    np.subtract(g0, step, out=step)
    step *= half
    step += g1
    step *= ds
    g2 += step
    np.multiply(third, g0, out=step)                 # G1 + ds (G0 - ds/2 beta (G1 + ds/3 G0))
    step += g1
    step *= beta
    step *= half
    np.subtract(g0, step, out=step)
    step *= ds
    g1 += step


def _quartic_step(work: DriftWork, s, dt, r0, eta0, zeta0, beta, out, newton):
    """Danby's quartic correction of s for F(s) = r0 s + eta0 G2 + zeta0 G3 - dt, at G in ``work``.

    F1 = r0 + eta0 G1 + zeta0 G2 (the radius), F2 = eta0 G0 + zeta0 G1 and
    F3 = zeta0 G0 - beta eta0 G1 are the first three derivatives; the steps
    d1 = -F/F1, d2 = -F/(F1 + d1 F2/2), d3 = -F/(F1 + d2 F2/2 + d2^2 F3/6)
    (Danby 1988, section 6.6, applied to the universal Kepler equation).
    Writes d3 into ``out`` and |d1|, Newton's step, into ``newton``.
    """
    f, f1, f2, f3, d, term = work.f, work.f1, work.f2, work.f3, work.d, work.b
    np.multiply(eta0, work.g2, out=f)
    f += np.multiply(zeta0, work.g3, out=term)
    f += np.multiply(r0, s, out=term)
    f -= dt
    np.multiply(eta0, work.g1, out=f1)
    f1 += np.multiply(zeta0, work.g2, out=term)
    f1 += r0
    np.multiply(eta0, work.g0, out=f2)
    f2 += np.multiply(zeta0, work.g1, out=term)
    np.multiply(zeta0, work.g0, out=f3)
    np.multiply(beta, eta0, out=term)
    f3 -= np.multiply(term, work.g1, out=term)
    np.divide(f, f1, out=d)                          # -d1
    np.abs(d, out=newton)
    d *= -0.5
    d *= f2
    d += f1
    np.divide(f, d, out=d)                           # -d2
    f3 *= d
    f3 *= d
    f3 *= 1.0 / 6.0
    d *= f2
    d *= -0.5
    d += f1
    d += f3                                          # F1 + d2 F2/2 + d2^2 F3/6
    np.divide(f, d, out=out)
    np.negative(out, out=out)
    return out


def _initial_guess(work: DriftWork, dt, r0, eta0, zeta0):
    """s to third order in dt from the series of the universal Kepler equation,
    dt = r0 s + eta0 s^2/2 + zeta0 s^3/6 + O(s^4), inverted term by term (exact for circles):
    s = u (1 - (eta0 / (2 r0)) u + (eta0^2 / (2 r0^2) - zeta0 / (6 r0)) u^2) with u = dt / r0."""
    u, eta_over_r, s = work.a, work.b, work.s
    np.divide(dt, r0, out=u)
    np.divide(eta0, r0, out=eta_over_r)
    np.multiply(eta_over_r, eta_over_r, out=s)
    s *= 0.5
    np.divide(zeta0, r0, out=work.t)
    work.t *= 1.0 / 6.0
    s -= work.t
    s *= u
    eta_over_r *= 0.5
    s -= eta_over_r
    s *= u
    s += 1.0
    s *= u
    return s


def _dot(a, b, out, term):
    """a . b of vectors shaped (3, ...), into ``out``."""
    np.multiply(a[0], b[0], out=out)
    out += np.multiply(a[1], b[1], out=term)
    out += np.multiply(a[2], b[2], out=term)
    return out


def _not_yet_done(newton, s, out=None, scratch=None):
    """Where the guess before the last quartic correction was not yet within _QUARTIC_DONE of the
    root (judged by Newton's step), so that the correction may have left more than rounding.
    NaN counts as done: it stays NaN and its draw is stopped by the caller."""
    limit = np.abs(s, out=scratch)
    limit *= _QUARTIC_DONE
    return np.greater(newton, limit, out=out)


def kepler_drift(x, v, gm, dt, work: DriftWork | None = None):
    """Advance two-body orbits in place by ``dt`` with the f and g functions (Danby 1988).

    With r0 = |x|, beta = 2 gm / r0 - v^2, eta0 = x . v and
    zeta0 = gm - beta r0, the universal anomaly s solves
    r0 s + eta0 G2 + zeta0 G3 = dt, the new radius is
    r = r0 + eta0 G1 + zeta0 G2, and
    x' = f x + g v, v' = fdot x + gdot v with f - 1 = -gm G2 / r0,
    g = dt - gm G3, fdot = -gm G1 / (r r0), gdot - 1 = -gm G2 / r (Danby
    1988, sections 6.9-6.10). The position and velocity are updated by
    their small changes, (f - 1) x + g v and fdot x + (gdot - 1) v, which
    keeps rounding errors small over many steps. s starts from the
    third-order series in dt and takes Danby's quartic correction; orbits
    whose guess was not yet close are corrected further on their own, and
    any that do not settle (long steps, close or unbound passages) are
    solved inside a bracket.

    Parameters
    ----------
    x, v : ndarray, shape (3, ...)
        Positions and velocities (any consistent units), updated in place.
    gm : ndarray
        G (M + m) of each orbit, broadcasting against ``x[0]`` [length^3 / time^2].
    dt : float or ndarray
        Time step of each orbit, broadcasting against ``x[0]`` (negative steps go back).
    work : DriftWork, optional
        Work arrays for orbits shaped like ``x[0]``; made for the call when not given.

    Returns
    -------
    ndarray
        The universal anomaly s of each orbit (shape of ``x[0]``; an array of ``work``).
    """
    shape = x.shape[1:]
    w = DriftWork(shape) if work is None else work
    r0 = np.sqrt(_dot(x, x, w.r0, w.a), out=w.r0)
    vv = _dot(v, v, w.vv, w.a)
    eta0 = _dot(x, v, w.eta0, w.a)
    beta = np.divide(gm, r0, out=w.beta)
    beta *= 2.0
    beta -= vv
    zeta0 = np.multiply(beta, r0, out=w.zeta0)
    np.subtract(gm, zeta0, out=zeta0)
    s = _initial_guess(w, dt, r0, eta0, zeta0)
    _stumpff_g(w, s, beta)
    ds = _quartic_step(w, s, dt, r0, eta0, zeta0, beta, w.ds, w.newton)
    s += ds
    slow = _not_yet_done(w.newton, s, out=w.slow, scratch=w.a)
    _advance_g(w, ds, beta)
    if slow.any():
        dt_all = np.broadcast_to(dt, shape)
        s[slow] = _refine(s[slow], dt_all[slow], r0[slow], eta0[slow], zeta0[slow], beta[slow])
        exact = _stumpff_g(DriftWork(s[slow].shape), s[slow], beta[slow])
        w.g1[slow], w.g2[slow], w.g3[slow] = exact.g1, exact.g2, exact.g3
    _apply_f_and_g(w, x, v, gm, dt, r0, eta0, zeta0)
    return s


def _refine(s, dt, r0, eta0, zeta0, beta):
    """More quartic corrections for the orbits that need them, each until its own Newton step
    is tiny; any still unsettled after a few go to the bracketed solver."""
    s = s.copy()
    todo = np.arange(s.size)
    for _ in range(_QUARTIC_RETRIES):
        sub = s[todo]
        args = dt[todo], r0[todo], eta0[todo], zeta0[todo], beta[todo]
        work = _stumpff_g(DriftWork(sub.shape), sub, args[-1])
        sub += _quartic_step(work, sub, *args, np.empty_like(sub), work.newton)
        s[todo] = sub
        todo = todo[_not_yet_done(work.newton, sub)]
        if not todo.size:
            return s
    s[todo] = _solve_bracketed(s[todo], dt[todo], r0[todo], eta0[todo], zeta0[todo], beta[todo])
    return s


def _residual_and_radius(s, dt, r0, eta0, zeta0, beta):
    """F(s) = r0 s + eta0 G2 + zeta0 G3 - dt and F1(s) = r0 + eta0 G1 + zeta0 G2, at any z."""
    _, c1, c2, c3 = stumpff_c0_to_c3(beta * s * s)
    g1, g2, g3 = s * c1, s * s * c2, s * s * s * c3
    return r0 * s + eta0 * g2 + zeta0 * g3 - dt, r0 + eta0 * g1 + zeta0 * g2


def _solve_bracketed(s, dt, r0, eta0, zeta0, beta):
    """s for the orbits the quartic corrections could not settle.

    F(s) rises monotonically (F1 = r > 0) and F(0) = -dt, so the root is
    bracketed by 0 and a bound doubled until F changes sign; Newton's steps
    that leave the bracket are replaced by bisection. Each orbit stops on
    its own when its step falls to rounding level.
    """
    forward = dt >= 0.0
    reach = np.abs(dt) / r0
    lo = np.where(forward, 0.0, -reach)
    hi = np.where(forward, reach, 0.0)
    for _ in range(_MAX_DOUBLINGS):                  # widen the bracket until F changes sign
        f_hi, _ = _residual_and_radius(hi, dt, r0, eta0, zeta0, beta)
        f_lo, _ = _residual_and_radius(lo, dt, r0, eta0, zeta0, beta)
        short_hi, short_lo = forward & (f_hi < 0.0), ~forward & (f_lo > 0.0)
        if not (np.any(short_hi) or np.any(short_lo)):
            break
        hi = np.where(short_hi, 2.0 * hi, hi)
        lo = np.where(short_lo, 2.0 * lo, lo)
    inside = (s > lo) & (s < hi)
    s = np.where(inside, s, 0.5 * (lo + hi))
    todo = np.arange(s.size)
    for _ in range(_MAX_BRACKETED_STEPS):
        sub, lo_t, hi_t = s[todo], lo[todo], hi[todo]
        f, r = _residual_and_radius(sub, dt[todo], r0[todo], eta0[todo], zeta0[todo], beta[todo])
        lo_t = np.where(f < 0.0, sub, lo_t)
        hi_t = np.where(f > 0.0, sub, hi_t)
        new = sub - f / r
        new = np.where((new > lo_t) & (new < hi_t), new, 0.5 * (lo_t + hi_t))
        moving = (np.abs(new - sub) > 4e-16 * np.abs(new)) & (hi_t - lo_t > 4e-16 * np.abs(new))
        s[todo], lo[todo], hi[todo] = new, lo_t, hi_t
        if not np.any(moving):
            break
        todo = todo[moving]
    return s


def _apply_f_and_g(w: DriftWork, x, v, gm, dt, r0, eta0, zeta0):
    """x += (f - 1) x + g v and v += fdot x + (gdot - 1) v, from G1..G3 (in ``w``) at the solved s."""
    r = np.multiply(eta0, w.g1, out=w.r)
    r += np.multiply(zeta0, w.g2, out=w.a)
    r += r0                                          # r = r0 + eta0 G1 + zeta0 G2
    gm_g2 = np.multiply(gm, w.g2, out=w.f)
    minus_gdot1 = np.divide(gm_g2, r, out=w.f1)      # -(gdot - 1) = gm G2 / r
    minus_f1 = np.divide(gm_g2, r0, out=w.f2)        # -(f - 1) = gm G2 / r0
    g = np.multiply(gm, w.g3, out=w.f3)
    np.subtract(dt, g, out=g)                        # g = dt - gm G3
    minus_fdot = np.multiply(gm, w.g1, out=w.d)
    minus_fdot /= r
    minus_fdot /= r0                                 # -fdot = gm G1 / (r r0)
    dx, dv, term = w.vectors
    np.multiply(g, v, out=dx)
    dx -= np.multiply(minus_f1, x, out=term)
    np.multiply(minus_fdot, x, out=dv)
    dv += np.multiply(minus_gdot1, v, out=term)
    x += dx
    v -= dv
