"""Many options' Monte Carlo yields at once, each exactly as ``evaluation.evaluate`` makes it alone
(pure core; ``ranking.evaluate_and_rank`` drives it).

Why it is faster than one ``evaluate`` per option, and why the figures stay the same:
- the nominal outputs and corners of an option are made once per electrical key and shared by
  the first cut, the screen and the full run;
- every option is drawn from the same seed, so the draws before they meet the parts
  (``tolerance.unit_draws``) are made once per (sample count, input counts); the parts-only run
  reuses the full run's drawn inputs;
- the options of one connection go through the circuit's model in ONE call, stacked row by row:
  the models are elementwise along the samples and the Shockley solve stops row by row
  (``timing.log_wright_omega``), so each row is bit for bit its option's stand-alone run
  (tests/core/test_batched_evaluation.py checks every figure against ``evaluate``);
- the parts-only run (chip, supply and diode terms at nominal) is made only for the options
  shown; the screen and the ranking do not use it.
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np

from selector.core import evaluation as ev


def _electrical_key(found) -> tuple:
    """What a Monte Carlo run of one option depends on besides the settings: the connection and,
    per role, the network's structure and each physical part's value and tolerances in combine
    order. Two variants with the same key (the same parts from other drawers) get the same draws
    and so the same yield."""
    return (found.connection,) + tuple(
        (role, net.structure, tuple((p.value, p.tol_minus, p.tol_plus) for p in net.physical))
        for role, net in sorted(found.networks.items()))


BATCH_ELEMENTS = 1 << 18
"""At most this many samples (options x builds) per stacked model call, so a large --samples
does not multiply the peak memory by the number of options (10 000 builds: 26 options a call)."""
KEEP_ELEMENTS = 1 << 21
"""Drawn inputs up to this size are kept for reuse; larger ones are drawn again (same seed, same
values) when needed."""


class YieldRuns:
    """``evaluation.evaluate`` for many options at once, with the same figures as one call per option
    (see the module docstring). Results are remembered per (electrical key, sample count): a
    variant that differs only in its drawers is not simulated again; the cautions depend on the
    stock lines (ratings, dielectric), so each call still returns the option's own RankedOption."""

    def __init__(self, target, limits_by_connection, accept, distribution, samples, seed):
        from selector.core import tolerance

        self.args = (target, limits_by_connection, accept, distribution, seed)
        self.distribution = tolerance._check_distribution(distribution)
        self.full = samples
        self.memo: dict = {}
        self.bases: dict = {}
        self.units: dict = {}
        self.scaled: dict = {}   # (id(base), builds) -> that option's drawn inputs (the parts-only run reuses them)
        self.pending_parts: dict = {}   # memo key -> (base, builds drawn) for ``parts_only``
        self.key_of: dict = {}   # id(RankedOption returned by ``many``) -> its memo key

    def _base(self, found, key=None, figures: bool = True) -> ev._Base:
        """The option's ``evaluation._Base`` (``figures=False``: its nominal outputs and corners may be
        missing; the yield alone does not need them)."""
        key = _electrical_key(found) if key is None else key
        if figures and not hasattr(self.bases.get(key), "nom"):
            self.bases.pop(key, None)
            self.bases_of([found])
        b = self.bases.get(key)
        if b is None:
            target, limits, _accept, _d, _s = self.args
            b = self.bases[key] = ev._Base(found, target, limits[found.connection], figures=False)
        return b

    def firsts(self, founds: Sequence) -> list:
        """``evaluate(..., monte_carlo=False)`` for each: nominal figures and corners, no yield."""
        target, limits, accept, _d, _s = self.args
        self.bases_of(founds)
        return [ev._ranked(f, target, limits[f.connection], accept, self._base(f), math.nan, math.nan, 0)
                for f in founds]

    def bases_of(self, founds: Sequence) -> None:
        """Make the missing ``evaluation._Base`` of ``founds``: per connection ONE model call whose rows are
        each option's nominal point and its corner points (a row repeats its points up to the
        widest row; the model is elementwise and each row's Shockley solve stops on its own, so
        every figure is the one ``evaluation._Base`` computes alone, and min/max see the same points)."""
        target, limits, _a, _d, _s = self.args
        missing: dict = {}
        for f in founds:
            key = _electrical_key(f)
            if not hasattr(self.bases.get(key), "nom") and key not in missing:
                missing[key] = f
        by_conn: dict = {}
        for key, f in missing.items():
            by_conn.setdefault(f.connection, []).append(key)
        for connection, keys in by_conn.items():
            bases = [ev._Base(missing[k], target, limits[connection], figures=False) for k in keys]
            points = [b.corner_points() for b in bases]
            width = max(p[0].size for p in points)
            rows = []
            for b, p in zip(bases, points):
                rows.append((b, np.broadcast_to(b.nominal[:, None], (len(b.nominal), width))))
                rows.append((b, np.stack([np.resize(a, width) for a in p])))
            outs = self._model_rows(connection, rows, width)
            for i, (key, b, p) in enumerate(zip(keys, bases, points)):
                b.nom = [float(o[2 * i, 0]) for o in outs]
                vals = np.stack([o[2 * i + 1, :p[0].size] for o in outs])
                b.cmin, b.cmax = vals.min(axis=1), vals.max(axis=1)
                self.bases[key] = b

    def _model_rows(self, connection: str, rows: list, n: int) -> list:
        """The circuit's model over stacked rows: ``rows`` holds (base, (inputs, n) array);
        returns the outputs as (len(rows), n) arrays, row i from rows[i]."""
        v: dict = {}
        extra: dict = {}
        for i, (b, x) in enumerate(rows):
            vi, ei = b.fn.split_array(x)
            for into, got in ((v, vi), (extra, ei)):
                for name, a in got.items():
                    if name not in into:
                        into[name] = np.empty((len(rows), n))
                    into[name][i] = a
        _target, limits, _a, _d, _s = self.args
        outs = rows[0][0].kind.model(v, limits[connection], extra)
        return [np.broadcast_to(np.asarray(o, dtype=float), (len(rows), n)) for o in outs]

    def samples_used(self, n: int) -> int:
        """The builds a call with ``n`` actually draws (the full sample is at least MIN_SAMPLES)."""
        from selector.core.tolerance import MIN_SAMPLES

        return int(n) if n < self.full else max(int(n), MIN_SAMPLES)

    def _unit(self, n: int, k1: int, k2: int) -> np.ndarray:
        """The unit draws of ``_monte_carlo``: k1 rows (parts), then k2 rows (other terms)."""
        from selector.core import tolerance

        key = (n, k1, k2)
        u = self.units.get(key)
        if u is None:
            rng = tolerance.rng_for(self.args[4])
            u = tolerance.unit_draws(k1, n, rng, self.distribution)
            if k2:
                u = np.concatenate([u, tolerance.unit_draws(k2, n, rng, self.distribution)])
            if u.size <= KEEP_ELEMENTS:
                self.units[key] = u
        return u

    def _outputs(self, connection: str, bases: list, n: int, parts_only: bool = False) -> list:
        """The model's outputs over ``n`` seeded builds for options of ONE connection, stacked:
        a list of (len(bases), n) arrays. ``parts_only``: the terms beyond ``fn.n_parts_only`` at
        their nominal values (the parts-only run of ``_monte_carlo``)."""
        from selector.core import tolerance

        rows = []
        for b in bases:
            k1, k = b.fn.n_parts_only, len(b.nominal)
            x = self.scaled.get((id(b), n))
            if x is None:
                x = tolerance.scale_draws(b.nominal, b.tm, b.tp, self._unit(n, k1, k - k1), self.distribution)
                if x.size <= KEEP_ELEMENTS:
                    self.scaled[(id(b), n)] = x
            if parts_only:
                x = x.copy()
                x[k1:] = b.nominal[k1:, None]
            rows.append((b, x))
        return self._model_rows(connection, rows, n)

    def _run(self, todo: dict, n: int, parts_only: bool = False):
        """{memo key: (base, found)} -> yields (memo key, that option's outputs: a list of (n,)
        arrays), one model call per connection and batch of at most ``BATCH_ELEMENTS`` samples;
        a batch's outputs are dropped once the caller moves past them."""
        by_conn: dict = {}
        for key, (b, f) in todo.items():
            by_conn.setdefault(f.connection, []).append(key)
        rows = max(1, BATCH_ELEMENTS // max(int(n), 1))
        for connection, keys in by_conn.items():
            for at in range(0, len(keys), rows):
                part = keys[at:at + rows]
                outs = self._outputs(connection, [todo[k][0] for k in part], n, parts_only)
                for i, key in enumerate(part):
                    yield key, [o[i] for o in outs]

    def many(self, founds: Sequence, n: int) -> list:
        """``evaluate(found, ..., n, screen=n < samples)`` for each, without the parts-only yield
        (``parts_only`` adds it to the ones shown)."""
        import dataclasses

        target, limits, accept, _d, _s = self.args
        draws = self.samples_used(n)
        keys = [(_electrical_key(f), n) for f in founds]
        todo = {}
        for f, key in zip(founds, keys):
            if key not in self.memo and key not in todo:
                todo[key] = (self._base(f, key[0]), f)
        figures = {}
        for key, outs in self._run(todo, draws):
            b = todo[key][0]
            y = float(np.mean(b.kind.in_spec(outs, target, accept)))
            figures[key] = (y, ev._extremes(outs))
        out = []
        for f, key in zip(founds, keys):
            done = self.memo.get(key)
            if done is None:
                b = todo[key][0]
                y, extremes = figures[key]
                # without chip, supply or diode terms the full run IS the parts-only run
                y_parts = y if b.fn.n_parts_only == len(b.nominal) else math.nan
                done = ev._ranked(f, target, limits[f.connection], accept, b, y, y_parts, draws, extremes)
                self.memo[key] = done
                self.pending_parts[key] = (b, draws)
            else:
                done = dataclasses.replace(done, found=f, cautions=ev.cautions(f, target, limits[f.connection]),
                                           rank=0, is_best_error=False, why="", yield_group=0, alternatives=[])
            self.key_of[id(done)] = key
            out.append(done)
        return out

    def parts_only(self, options: Sequence) -> None:
        """Set ``yield_parts_only`` of options returned by ``many`` (one model call per connection
        for those with chip, supply or diode terms; the others' full run is their parts-only run)."""
        target, _limits, accept, _d, _s = self.args
        need: dict = {}      # builds drawn -> {memo key: (base, found)}
        waiting: dict = {}   # memo key -> the options that take its parts-only yield
        for o in options:
            if not math.isnan(o.yield_parts_only):
                continue
            key = self.key_of[id(o)]
            b, draws = self.pending_parts[key]
            need.setdefault(draws, {})[key] = (b, o.found)
            waiting.setdefault(key, []).append(o)
        for draws, todo in need.items():
            for key, outs in self._run(todo, draws, parts_only=True):
                y = float(np.mean(todo[key][0].kind.in_spec(outs, target, accept)))
                for o in waiting[key]:
                    o.yield_parts_only = y

    def yields_of(self, founds: Sequence, n: int) -> list:
        """The ``yield_fraction`` of ``evaluate(found, ..., n)`` for each, without its other figures
        (a listed option's alternatives), remembered like ``many`` (a full evaluation of the same
        key and count gives the same yield)."""
        target, limits, accept, _d, _s = self.args
        todo, keys = {}, []
        for f in founds:
            key = (_electrical_key(f), n)
            keys.append(key)
            if key in self.memo or ("yield",) + key in self.memo or key in todo:
                continue
            todo[key] = (self._base(f, key[0], figures=False), f)
        for key, outs in self._run(todo, int(n)):
            self.memo[("yield",) + key] = float(np.mean(todo[key][0].kind.in_spec(outs, target, accept)))
        return [self.memo[key].yield_fraction if key in self.memo else self.memo[("yield",) + key]
                for key in keys]
