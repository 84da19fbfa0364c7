"""Tolerance analysis: worst-case corners and a seeded, vectorised Monte Carlo (pure numpy).

Conventions (facts.md §10):
- A part with nominal v and tolerances (tm, tp) lies in the band [v·(1 − tm), v·(1 + tp)].
- ``uniform`` (default): every value in the band equally likely — the pessimistic choice,
  σ = t/√3 for a symmetric band (derived).
- ``normal``: tolerance = 3σ (common practice, facts §10; no standard found). For an asymmetric
  band (e.g. −20/+80 %) each side is half of a normal with σ = (that side's tolerance)/3, so the
  median stays at nominal. Draws are TRUNCATED to the band (redrawn until inside): a part outside
  its marked tolerance would fail incoming inspection, and the cut only removes the 0.27 % beyond
  3σ. Real parts may be binned inside the band [S24]; both models are approximations.
"""

from __future__ import annotations

from typing import Callable, Sequence

import numpy as np

from selector.core.errors import UnknownDistribution

DISTRIBUTIONS = ("uniform", "normal")
MIN_SAMPLES = 10_000          # Monte Carlo draws per option (issue contract: at least 10 000)
SIGMAS_PER_TOLERANCE = 3.0    # common practice: tolerance = ±3σ for normally distributed parts


def rng_for(seed: int = 0) -> np.random.Generator:
    """A reproducible generator: the same seed gives the same draws on every run."""
    return np.random.default_rng(int(seed))


def _check_distribution(distribution: str) -> str:
    d = str(distribution).strip().lower()
    if d not in DISTRIBUTIONS:
        raise UnknownDistribution(
            f"unknown distribution {distribution!r}; expected one of: {', '.join(DISTRIBUTIONS)}"
        )
    return d


def _truncated_std_normal(shape: tuple[int, ...], rng: np.random.Generator,
                          limit: float) -> np.ndarray:
    z = rng.standard_normal(shape)
    bad = np.abs(z) > limit
    while np.any(bad):                      # ~0.27 % redrawn per round at 3σ: a few rounds
        z[bad] = rng.standard_normal(int(bad.sum()))
        bad = np.abs(z) > limit
    return z


def draw_parts(nominal, tol_minus, tol_plus, n: int, rng: np.random.Generator,
               distribution: str = "uniform") -> np.ndarray:
    """Draw ``n`` sample values of each part; returns shape ``(len(nominal), n)``.

    Every sample lies inside its band [v·(1 − tm), v·(1 + tp)] for both distributions (see the
    module docstring for the normal model and its truncation). The same as
    ``scale_draws(nominal, tol_minus, tol_plus, unit_draws(len(nominal), n, rng, distribution))``.
    """
    dist = _check_distribution(distribution)
    v = np.atleast_1d(np.asarray(nominal, dtype=float))
    return scale_draws(v, tol_minus, tol_plus, unit_draws(v.size, n, rng, dist), dist)


def unit_draws(k: int, n: int, rng: np.random.Generator, distribution: str = "uniform") -> np.ndarray:
    """The draws behind :func:`draw_parts` before they meet the parts, shape (k, n): uniform on
    [0, 1), or standard normal truncated to ±``SIGMAS_PER_TOLERANCE``. They depend only on the
    generator's state, k and n, so one set serves every option drawn from the same seed."""
    dist = _check_distribution(distribution)
    shape = (int(k), int(n))
    if dist == "uniform":
        return rng.random(shape)                           # [0, 1)
    return _truncated_std_normal(shape, rng, SIGMAS_PER_TOLERANCE)


def scale_draws(nominal, tol_minus, tol_plus, unit: np.ndarray, distribution: str = "uniform") -> np.ndarray:
    """Part values from :func:`unit_draws`: row j of ``unit`` placed in part j's band."""
    dist = _check_distribution(distribution)
    v = np.atleast_1d(np.asarray(nominal, dtype=float))
    tm = np.broadcast_to(np.asarray(tol_minus, dtype=float), v.shape)[:, None]
    tp = np.broadcast_to(np.asarray(tol_plus, dtype=float), v.shape)[:, None]
    if dist == "uniform":
        rel = -tm + unit * (tm + tp)
    else:
        rel = np.where(unit >= 0, unit * tp, unit * tm) / SIGMAS_PER_TOLERANCE
    return v[:, None] * (1.0 + rel)


def _as_outputs(result) -> list[np.ndarray]:
    if isinstance(result, (tuple, list)):
        return [np.asarray(r, dtype=float) for r in result]
    return [np.asarray(result, dtype=float)]


def _evaluate_box(fn: Callable, axes: list[np.ndarray]) -> np.ndarray:
    """Evaluate ``fn`` on the full grid of per-part levels; returns (n_out, n_points, ...)."""
    k = len(axes)
    counts = [a.shape[0] for a in axes]
    idx = np.indices(counts).reshape(k, -1)               # (k, n_points)
    args = [axes[j][idx[j]] for j in range(k)]            # each (n_points, ...)
    outs = _as_outputs(fn(*args))
    shape = np.broadcast_shapes(*(o.shape for o in outs), args[0].shape)
    return np.stack([np.broadcast_to(o, shape) for o in outs])


def corners(fn: Callable, lows: Sequence, highs: Sequence) -> tuple[np.ndarray, np.ndarray]:
    """Minimum and maximum of each output of ``fn`` over the 2^k corners of the part box.

    ``fn(*values)`` takes one array per part and returns one array or a tuple of them. ``lows``
    and ``highs`` hold each part's band edges, as floats or as arrays (one entry per option, so
    many options are handled in one call). Returns ``(mins, maxs)`` of shape (n_outputs, ...).
    A nan at any corner (e.g. no oscillation) propagates into that output's min and max.

    When the corners are the exact worst case: when every output is monotone in each part over
    the box (facts.md §10). That holds for all models in :mod:`selector.core.timing` with fixed
    VCC and Vf: frequency, width, τ and corner fall as any R or C rises; the standard-astable duty
    (RA+RB)/(RA+2RB) rises with RA, falls with RB and ignores C. For the diode-steered astable
    (derived): t_high rises with RA, and with RB it is flat (diode on throughout) or rises with
    dt_high/dRB = C·ln x > 0, x = (VCC − Vc*)/(VCC/3) ∈ (1, 2) (piecewise region); the duty falls
    with RB because th/C > RB·ln x. So the corners are exact there too. Series and parallel
    networks are increasing in every part, so evaluating over the PHYSICAL parts through a
    network's combine keeps the corners exact. The diode drop Vf is not toleranced. With the
    discharge switch's RD in t_low (``timing.discharge_low``: falling with RA, rising with RB and C)
    the duty still rises with RA and falls with RB, and t_low, t_high, the width move one way
    with each part; the period's slope in RA, C·(ln2 − about 1.5·RB·RD/RA²), changes sign only
    where RA² ≈ 2.2·RB·RD, where the period is flat in RA: there the corners can miss a bulge of
    about 1.1·RD·t²/RA of the period (t the RA tolerance; 4e-5 at RD 40 Ω, 5 %, RA 2.9 kΩ;
    derived), far below any tolerance shown. For any other
    ``fn`` that is not monotone, use :func:`grid_extremes` or the Monte Carlo samples as well.
    """
    if len(lows) != len(highs):
        raise ValueError("lows and highs need one entry per part")
    axes = []
    for lo, hi in zip(lows, highs):
        lo, hi = np.broadcast_arrays(np.asarray(lo, dtype=float), np.asarray(hi, dtype=float))
        axes.append(np.stack([lo, hi]))
    vals = _evaluate_box(fn, axes)
    return vals.min(axis=1), vals.max(axis=1)


def grid_extremes(fn: Callable, lows: Sequence, highs: Sequence,
                  points: int = 5) -> tuple[np.ndarray, np.ndarray]:
    """Like :func:`corners` but on a grid of ``points`` levels per part (corners included).

    For functions that may have an interior extreme; not exact, only denser.
    """
    if points < 2:
        raise ValueError("points must be at least 2")
    s = np.linspace(0.0, 1.0, points)
    axes = []
    for lo, hi in zip(lows, highs):
        lo, hi = np.broadcast_arrays(np.asarray(lo, dtype=float), np.asarray(hi, dtype=float))
        sl = s.reshape((-1,) + (1,) * lo.ndim)
        axes.append(lo + sl * (hi - lo))
    vals = _evaluate_box(fn, axes)
    return vals.min(axis=1), vals.max(axis=1)


def band(nominal, tol_minus, tol_plus) -> tuple[np.ndarray, np.ndarray]:
    """Band edges ``(v·(1 − tm), v·(1 + tp))`` of parts."""
    v = np.asarray(nominal, dtype=float)
    return v * (1.0 - np.asarray(tol_minus, dtype=float)), v * (1.0 + np.asarray(tol_plus, dtype=float))


def monte_carlo(fn: Callable, nominal, tol_minus, tol_plus, n: int = MIN_SAMPLES,
                rng: np.random.Generator | None = None,
                distribution: str = "uniform") -> np.ndarray:
    """Draw ``n`` builds of the parts and return ``fn`` of each: shape (n_outputs, n)."""
    rng = rng_for(0) if rng is None else rng
    parts = draw_parts(nominal, tol_minus, tol_plus, n, rng, distribution)
    outs = _as_outputs(fn(*parts))
    return np.stack([np.broadcast_to(o, (int(n),)) for o in outs])


def yield_fraction(values, target, accept: float):
    """Share of builds with |value/target − 1| ≤ accept (non-finite values count as failures).

    ``values`` has samples on its last axis; ``target`` broadcasts against the other axes.
    Returns a float for 1-D ``values``, otherwise an array.
    """
    v = np.asarray(values, dtype=float)
    t = np.asarray(target, dtype=float)
    if t.ndim and v.ndim > 1:
        t = t[..., None]
    with np.errstate(divide="ignore", invalid="ignore"):
        inside = np.abs(v / t - 1.0) <= accept
    frac = inside.mean(axis=-1)
    return float(frac) if np.ndim(frac) == 0 else frac


def relative_sigma(values, reference) -> float:
    """Standard deviation of ``values`` relative to ``reference`` (e.g. the nominal result)."""
    v = np.asarray(values, dtype=float)
    return float(np.std(v) / float(reference))
