"""Generic laminar flow engine (Rabinowitsch-Mooney) for any declared model.

Laminar, isothermal, fully developed flow without wall slip in a tube or a
wide slit.  The flow rate follows from the inverse flow curve gd(tau)
(Rabinowitsch 1929; Mooney 1931):

    tube:  Q = pi R^3 / tau_w^3 * int_0^tau_w tau^2 gd(tau) dtau
    slit:  Q = 2 W h^2 / tau_w^2 * int_0^tau_w tau gd(tau) dtau

Substituting tau = tau(s) over the shear rate s and integrating by parts
(the boundary term vanishes, also at a yield stress where gd = 0) removes
the inverse and every derivative:

    Q = flow_scale * int_0^gd_w (1 - (tau(s)/tau_w)^k) ds

with flow_scale = pi R^3/3, k = 3 (tube) or W h^2, k = 2 (slit), and gd_w
the wall shear rate, tau(gd_w) = tau_w.  The velocity profile
u(r) = (R/tau_w) int_{tau_w r/R}^{tau_w} gd(tau) dtau becomes, the same way,

    u(r) = (R/tau_w) * [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ]

with tau_r = tau_w r/R and s_r the local shear rate (0 inside a plug).

Numerics (vectorised over operating points, and over parameter sets of one
model: :func:`solve_sets`): the integrals are taken in
v = ln(s/gd_w) on [-36, 0] with fixed 8-point Gauss-Legendre panels, fine
near the wall and wider towards the centre (the integrands are smooth in v
for every model, which removes the s^(kn) end-point singularity of a power
law); the part below gd_w e^-36 (< 3e-16 of the total) is added as a
one-point tail.  The only roots are scalar per point: gd_w with
tau(gd_w) = tau_w, or, when Q is given, gd_w with Q(gd_w) = Q; both by a
bracketed Newton iteration on ln gd over all points at once, started from a
monotone table of ln tau over ln gd.  A model that declares its inverse
(``shear_rate_function``, gd(tau)) gets gd_w from tau_w directly, and, when Q
is given, the iteration runs on ln tau_w with d ln q_k / d ln tau_w =
k (gd_w - q_k) / q_k: no root of the flow curve is solved for the wall.

Units: stress [Pa], shear rate [1/s], lengths [m], flow rate [m^3/s],
pressure [Pa], velocity [m/s].
"""

from __future__ import annotations

from collections import OrderedDict
from dataclasses import dataclass

import numpy as np

from rheofit.errors import GeometryError, ParameterError, choice_message
from rheofit.fluid import Fluid, as_fluid
from rheofit.flow.geometry import check_geometry

# --- quadrature in v = ln(s / gd_w) -------------------------------------------

#: the integrals run over v in [-LOG_SPAN, 0]; e^-36 = 2.3e-16
LOG_SPAN = 36.0
_GAUSS_ORDER = 8
#: rows of operating points per vectorised block, chosen by measurement
#: (benchmarks/flow_speed.py, 32-4096 rows, each in a fresh process): 64 rows of
#: 248 nodes make temporaries of 124 KiB, within a core's L2 cache and below
#: glibc's initial 128 KiB mmap threshold (larger ones are mapped and zeroed
#: afresh for each block); 4096 rows, the size before, was 4-5x slower
BLOCK_ROWS = 64
#: parameter sets per block of their start-up tables, and the step of those tables
#: in entries of the full one (8: 4 in ln s)
_SET_BLOCK = 64
_COARSE = 8

#: ways the engine may compute the flow rate
METHODS = ("auto", "generic")


def _graded_rule(span: float = LOG_SPAN) -> tuple[np.ndarray, np.ndarray]:
    """Composite Gauss-Legendre nodes and weights on [-span, 0], ascending.

    Panels 0.5 wide on [-6, 0], 1 wide on [-14, -6], 2 wide below: the
    integrands carry the weight e^v, so the far panels matter little.
    """
    breaks = np.unique(np.concatenate([
        np.arange(0.0, -6.0, -0.5), np.arange(-6.0, -14.0, -1.0),
        np.arange(-14.0, -span, -2.0), [-span],
    ]))
    x, w = np.polynomial.legendre.leggauss(_GAUSS_ORDER)
    left, right = breaks[:-1, None], breaks[1:, None]
    nodes = 0.5 * (left + right) + 0.5 * (right - left) * x[None, :]
    weights = 0.5 * (right - left) * w[None, :]
    return nodes.ravel(), weights.ravel()


_V, _W = _graded_rule()
_E = np.exp(_V)
_EW = _E * _W
_TAIL = float(np.exp(-LOG_SPAN))


# --- the flow curve of one fluid and its inverse ------------------------------

#: a flow curve whose ln tau comes this close to its top before the table ends levels off
#: (Cross with eta_inf = 0 and m = 1): beyond that point the flow integral's deficit
#: 1 - (tau/tau_w)^k keeps few digits (a relative 2e-16 / (k _PLATEAU ln(1/_PLATEAU)), 5e-8
#: here) and the slope d ln tau / d ln s is lost in rounding, so the engine does not search
#: beyond it.  Chosen by measurement: of 350 flow rates at 0.5-0.999 of the maximum this
#: gives, over 25 such Cross fluids in a tube and a slit, none is refused at 1e-10, 6 at 1e-11.
_PLATEAU = 1e-10


class Rheology:
    """tau(s) of one fluid with its parameters bound, and its inverse s(tau)."""

    #: ln(shear rate) grid of the start-up table [ln(1/s)]: about 2e-300 to 1e308, above
    #: the subnormal doubles (below 2.2e-308), which are slow and carry few digits
    _TABLE = np.arange(-690.0, 709.0, 0.5)

    def __init__(self, fluid: Fluid):
        """The flow curve of one fluid (see :meth:`of_sets` for many parameter sets)."""
        self.fluid = fluid
        self._bind(fluid.declaration, dict(fluid.values), None)
        self._x, self._lt = self._table()

    @classmethod
    def of_sets(cls, declaration, values) -> "Rheology":
        """The flow curves of R parameter sets of one model: ``values`` maps names to (R,) arrays [SI].

        Every array argument of the methods then has rows along its first
        axis, and ``sets`` (one int per row) says which set a row belongs to
        (None: row i is set i).  Nothing is raised for a set the engine
        cannot use: it is marked in ``unusable`` (no finite or no rising
        flow curve), and a stress above its flow curve gives a NaN shear rate.
        """
        self = cls.__new__(cls)
        self.fluid = None
        arrays = {k: np.atleast_1d(np.asarray(v, dtype=float)).ravel() for k, v in values.items()}
        self._bind(declaration, arrays, len(next(iter(arrays.values()))) if arrays else 0)
        self._set_tables()
        return self

    def _bind(self, declaration, params, size):
        self.declaration = declaration
        self._function = declaration.stress_function
        self._inverse = getattr(declaration, "shear_rate_function", None)
        self._params = params
        self.size = size
        if size is None:
            self.yield_stress = float(declaration.yield_stress(**params))
        elif declaration.yield_stress_function is None:
            self.yield_stress = np.zeros(size)
        else:
            tau_y = np.asarray(declaration.yield_stress_function(**params), dtype=float)
            self.yield_stress = np.broadcast_to(tau_y, (size,)).copy()

    @property
    def has_inverse(self) -> bool:
        """True when the model declares its inverse flow curve gd(tau)."""
        return self._inverse is not None

    def values(self, sets=None, ndim: int = 1) -> dict:
        """Parameter values [SI] of rows of the sets ``sets``, shaped to broadcast over ndim-D rows."""
        if self.size is None:
            return self._params
        shape = (-1,) + (1,) * (ndim - 1)
        return {k: (v if sets is None else v[sets]).reshape(shape) for k, v in self._params.items()}

    def yield_at(self, sets=None):
        """Yield stress tau_y [Pa] of each row (a float for one fluid)."""
        if self.size is None or sets is None:
            return self.yield_stress
        return self.yield_stress[sets]

    def stress(self, shear_rate, sets=None):
        """Shear stress tau(s) [Pa] at shear rate s [1/s]."""
        with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
            return self._function(shear_rate, **self.values(sets, np.ndim(shear_rate)))

    def log_slope(self, shear_rate, sets=None):
        """Local power-law index d ln tau / d ln s [-] by a central difference.

        The step in ln s is 6e-6 normally and grows near a yield stress, where
        tau - tau_y is a small part of tau: (eps tau / (tau - tau_y))^(1/3)
        balances rounding against truncation (at most 0.5).
        """
        with np.errstate(divide="ignore", invalid="ignore"):
            tau = self.stress(shear_rate, sets)
            excess = np.maximum(tau - self.yield_at(sets), 1e-300)
            step = np.clip(np.cbrt(2.2e-16 * tau / excess), 6e-6, 0.5)
            up = self.stress(shear_rate * np.exp(step), sets)
            down = self.stress(shear_rate * np.exp(-step), sets)
            return np.log(up / down) / (2.0 * step)

    def _table(self):
        """The rising branch of ln tau over ln s, as (ln s, ln tau) arrays."""
        with np.errstate(divide="ignore", invalid="ignore"):
            lt = np.log(self.stress(np.exp(self._TABLE)))
        if not np.isfinite(lt).any():
            raise ParameterError(
                f"Model {self.fluid.model} with {self._params} gives no finite stress at any "
                "shear rate; check the parameter values."
            )
        (start,), (stop,), (falls,) = _rising_branch(lt[None, :])
        # the curve falls (or turns negative) beyond the table rather than overflowing
        self._falls = bool(falls)
        if stop - start < 2:
            raise ParameterError(
                f"The flow curve of model {self.fluid.model} with {self._params} does not rise "
                "with shear rate; the flow engine needs a stress that increases with shear rate."
            )
        return self._TABLE[start:stop], lt[start:stop]

    def _set_tables(self):
        """Per set: ln tau over a coarse table, the bounds of its rising branch and its top.

        The coarse table is every 8th entry of the table (and its last): 2 % of
        the work of the full one for each set.  Where a set's flow curve falls,
        the end of its rising branch is found on the full table within the
        last two coarse steps, as for one fluid; elsewhere the coarse table
        only brackets and starts the Newton iterations of :meth:`shear_rate`.
        """
        index = np.unique(np.r_[0:self._TABLE.size:_COARSE, self._TABLE.size - 1])
        lt = self._log_table(index, None)
        start, stop, falls = _rising_branch(lt)
        self.unusable = stop - start < 2
        last = np.maximum(stop - 1, 0)
        self._grid, self._set_lt, self._from, self._to = self._TABLE[index], lt, start, stop
        self._tops, self._top_x = lt[np.arange(self.size), last], self._grid[last]
        ends = np.nonzero(falls & ~self.unusable)[0]
        if ends.size:  # the end on the full table: between coarse entries stop - 2 and stop
            base = index[np.maximum(stop[ends] - 2, start[ends])]
            cols = np.minimum(base[:, None] + np.arange(2 * _COARSE + 1)[None, :], self._TABLE.size - 1)
            fine = self._log_table(cols, ends)
            _, end, fell = _rising_branch(fine)
            found = end < cols.shape[1]
            rows, end = ends[found], end[found]
            self._tops[rows] = fine[found, end - 1]
            self._top_x[rows] = self._TABLE[cols[found, end - 1]]
            falls[rows] = fell[found]
        self._limits = np.where(falls, self._top_x, np.inf)
        self._level_off(index, lt, start, stop)

    def _level_off(self, index, lt, start, stop):
        """Move a set's rising limit back where its curve levels off, as :attr:`rising_limit` does.

        On the coarse table a set levels off when two entries of its rising
        branch lie within _PLATEAU of its top; the first ln s within it is then
        found on the full table, between the coarse entry before and the first
        one within.
        """
        cols = np.arange(lt.shape[1])[None, :]
        with np.errstate(invalid="ignore"):
            near = (cols >= start[:, None]) & (cols < stop[:, None]) & (self._tops[:, None] - lt <= _PLATEAU)
        sets = np.nonzero((near.sum(axis=1) > 1) & ~self.unusable)[0]
        if sets.size == 0:
            return
        first = np.argmax(near[sets], axis=1)
        base = index[np.maximum(first - 1, start[sets])]
        fine_cols = np.minimum(base[:, None] + np.arange(_COARSE + 1)[None, :], self._TABLE.size - 1)
        within = self._tops[sets][:, None] - self._log_table(fine_cols, sets) <= _PLATEAU
        self._limits[sets] = self._TABLE[fine_cols[np.arange(sets.size), np.argmax(within, axis=1)]]

    def _log_table(self, index, sets):
        """ln tau [ln Pa] at the table entries ``index`` (shared, or one row per set of ``sets``)."""
        count = self.size if sets is None else sets.size
        out = np.empty((count, np.shape(index)[-1]))
        with np.errstate(divide="ignore", invalid="ignore"):
            for b in _blocks(count, _SET_BLOCK):
                x = np.exp(self._TABLE[index if np.ndim(index) == 1 else index[b]])
                rows = np.arange(b.start, b.stop) if sets is None else sets[b]
                out[b] = np.log(self.stress(np.broadcast_to(x, (b.stop - b.start, x.shape[-1])), rows))
        return out

    @property
    def levels_off(self) -> bool:
        """True when ln tau comes within _PLATEAU of its top before the table ends (a plateau)."""
        return bool(np.count_nonzero(self._lt[-1] - self._lt <= _PLATEAU) > 1)

    @property
    def rising_limit(self) -> float:
        """ln of the shear rate [ln(1/s)] where the flow curve stops rising (inf if it never does).

        For a curve that levels off (e.g. Cross with eta_inf = 0 and m = 1:
        tau -> eta0/lam), where its ln tau first comes within _PLATEAU of the
        plateau: beyond, the flow integral loses its digits to cancellation.
        """
        if self.levels_off:
            return float(self._x[np.argmax(self._lt[-1] - self._lt <= _PLATEAU)])
        return float(self._x[-1]) if self._falls else np.inf

    def check_stress(self, stress) -> None:
        """Raise GeometryError when a stress lies above the rising flow curve."""
        too_high = self.beyond(stress)
        if np.any(too_high):
            worst = float(np.max(stress[too_high]))
            reach = "it stops rising at" if self._falls else "levelling off up to"
            raise GeometryError(
                f"A wall shear stress of {worst:.4g} Pa is beyond this fluid's flow curve "
                f"({self.fluid.model}: at most {np.exp(self._lt[-1]):.4g} Pa, {reach} a shear rate "
                f"of {np.exp(self._x[-1]):.3g} 1/s), so no laminar flow rate exists; "
                "lower the pressure drop or check the model parameters."
            )

    def rising_limits(self, sets, count: int) -> np.ndarray:
        """ln gd [ln(1/s)] where each of ``count`` rows' flow curve stops rising (inf: never)."""
        if self.size is None:
            return np.full(count, self.rising_limit)
        return self._limits[sets]

    def top(self, sets=None):
        """ln of the highest stress [ln Pa] on each row's rising flow curve (within the table)."""
        return self._lt[-1] if self.size is None else self._tops[sets]

    def beyond(self, stress, sets=None):
        """True where a stress [Pa] lies above the rising flow curve (of each row's set)."""
        with np.errstate(divide="ignore"):
            return np.log(stress) > self.top(sets)

    def shear_rate(self, stress, sets=None):
        """Inverse flow curve s(tau) [1/s]; 0 at or below the yield stress.

        The model's declared inverse where it has one, else a bracketed
        Newton iteration on ln s, started from the table.  One fluid: a
        stress above the flow curve raises GeometryError; parameter sets:
        it gives NaN.
        """
        stress = np.asarray(stress, dtype=float)
        out = np.zeros(stress.shape)
        moving = stress > np.maximum(self.yield_at(sets), 0.0)
        if not moving.any():
            return out
        tau = stress[moving]
        if self.size is None:
            self.check_stress(tau)
            out[moving] = self._rate(tau, None)
            return out
        rows = np.nonzero(moving)[0] if sets is None else sets[moving]
        fine = ~self.beyond(tau, rows)
        rate = np.full(tau.shape, np.nan)
        rate[fine] = self._rate(tau[fine], rows[fine])
        out[moving] = rate
        return out

    def _rate(self, stress, sets):
        """s(tau) [1/s] for stresses on the rising flow curve, above any yield stress."""
        if self._inverse is not None:
            return self.inverse(stress, sets)
        target = np.log(stress)
        lo, hi, x0, floor = self._start(target, sets)

        def residual(x, idx):
            rows = _pick(sets, idx)
            with np.errstate(all="ignore"):
                s = np.exp(x)
                return np.log(self.stress(s, rows)) - target[idx], self.log_slope(s, rows)

        x = _safeguarded_newton(residual, x0, lo.copy(), hi.copy())
        return np.exp(np.minimum(x, floor))

    def inverse(self, stress, sets=None):
        """The declared inverse flow curve gd(tau) [1/s] (no check against the table)."""
        with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
            return self._inverse(stress, **self.values(sets, np.ndim(stress)))

    def _start(self, target, sets):
        """Bracket (lo, hi), start x0 and cap of the Newton iteration on ln s, from the table.

        The cap is the table's first ln s for a target below its first
        stress (the root lies below the table), else +inf.
        """
        if self.size is None:
            x, lt, first = self._x, self._lt, np.searchsorted(self._lt, target, side="left")
            low_end = first == 0
            i = np.clip(first, 1, lt.size - 1)
            lo_lt, hi_lt, lo, hi = lt[i - 1], lt[i], x[i - 1], x[i]
            floor = np.where(low_end, x[0], np.inf)
        else:
            start, stop = self._from[sets], self._to[sets]
            first = _first_at_least(self._set_lt, sets, start, stop, target)
            low_end = first == start
            i = np.clip(first, start + 1, stop - 1)
            lo_lt, hi_lt = self._set_lt[sets, i - 1], self._set_lt[sets, i]
            lo, hi = self._grid[i - 1], self._grid[i]
            # above the last coarse entry of a branch that ends further on the full table
            above = first == stop
            lo_lt, lo = np.where(above, hi_lt, lo_lt), np.where(above, hi, lo)
            hi_lt, hi = np.where(above, self._tops[sets], hi_lt), np.where(above, self._top_x[sets], hi)
            floor = np.where(low_end, self._grid[start], np.inf)
        span = hi_lt - lo_lt
        with np.errstate(divide="ignore", invalid="ignore"):
            frac = np.where(span > 0, (target - lo_lt) / span, 0.5)
        return lo, hi, lo + np.clip(frac, 0.0, 1.0) * (hi - lo), floor


def _pick(sets, index):
    """The set of each selected row (None stays None: one fluid)."""
    return None if sets is None else sets[index]


def _rising_branch(lt):
    """Per row of ln tau over the table: (start, stop, falls) of its first rising run.

    start is the first finite entry; the run ends before the first entry that
    is not finite or falls by more than 1e-12; ``falls`` is True when it ends
    by falling (or turning negative) rather than by overflowing to +inf.
    """
    finite = np.isfinite(lt)
    start = np.argmax(finite, axis=1)
    ok = np.ones(lt.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        ok[:, 1:] = finite[:, 1:] & ((lt[:, 1:] - lt[:, :-1]) >= -1e-12)
    ok |= np.arange(lt.shape[1])[None, :] <= start[:, None]
    stop = np.where(ok.all(axis=1), lt.shape[1], np.argmin(ok, axis=1))
    at_stop = lt[np.arange(lt.shape[0]), np.minimum(stop, lt.shape[1] - 1)]
    falls = (stop < lt.shape[1]) & ~(at_stop == np.inf)
    return start, stop, falls


def _first_at_least(table, sets, start, stop, target):
    """Per row: the first column in [start, stop) of table[set] at or above target (stop if none).

    A bisection over all rows at once (the rows of table rise between start and stop).
    """
    lo, hi = start.copy(), stop.copy()
    while np.any(lo < hi):
        mid = (lo + hi) // 2
        below = table[sets, np.minimum(mid, table.shape[1] - 1)] < target
        open_ = lo < hi
        lo = np.where(open_ & below, mid + 1, lo)
        hi = np.where(open_ & ~below, mid, hi)
    return lo


# --- parameter sets and a cache per fluid --------------------------------------

class FluidMemo:
    """A small least-recently-used store of results per fluid (model and parameter values).

    ``get(fluid, extra, make)`` returns the value stored for this fluid's
    declaration, its values and ``extra`` (hashable), calling ``make()`` the
    first time.  A different declaration under the same name never hits.
    """

    def __init__(self, size: int = 32):
        self.size = size
        self._store: OrderedDict = OrderedDict()

    def get(self, fluid: Fluid, extra, make):
        key = (fluid.declaration.name, tuple(sorted(fluid.values.items())), extra)
        try:
            hit = self._store.get(key)
        except TypeError:  # unhashable values: no caching
            return make()
        if hit is not None and hit[0] is fluid.declaration:
            self._store.move_to_end(key)
            return hit[1]
        value = make()
        self._store[key] = (fluid.declaration, value)
        self._store.move_to_end(key)
        while len(self._store) > self.size:
            self._store.popitem(last=False)
        return value

    def __len__(self) -> int:
        return len(self._store)

    def clear(self) -> None:
        self._store.clear()


#: the start-up tables of recently used fluids (a Rheology is never changed once made)
RHEOLOGIES = FluidMemo()


def rheology_of(fluid: Fluid) -> Rheology:
    """The Rheology of a fluid, made once and kept (see :data:`RHEOLOGIES`)."""
    return RHEOLOGIES.get(fluid, None, lambda: Rheology(fluid))


def _safeguarded_newton(residual, x, lo, hi, tol=1e-10, maxiter=100):
    """Solve residual(x) = 0 (increasing in x) for many x at once.

    ``residual(x, idx)`` returns (F, dF/dx) for the points ``idx``; ``lo`` and
    ``hi`` bracket the roots (``hi`` may be +inf).  A Newton step that leaves
    the bracket is replaced by bisection, or by a step of +4 when unbounded.
    """
    x = np.array(x, dtype=float)
    active = np.arange(x.size)
    for _ in range(maxiter):
        if active.size == 0:
            break
        xa = x[active]
        f, df = residual(xa, active)
        f = np.where(np.isnan(f), -np.inf, f)  # e.g. log of a flow rate that rounded to <= 0: too low
        lo[active] = np.where(f < 0, xa, lo[active])
        hi[active] = np.where(f > 0, xa, hi[active])
        l, h = lo[active], hi[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = np.where(f == 0, xa, xa - f / df)
        # a Newton step this small leaves an error far below it (quadratic convergence)
        done = np.abs(newton - xa) <= tol
        accept = done | ((newton >= l) & (newton <= h) & np.isfinite(newton))
        fallback = np.where(np.isfinite(h), 0.5 * (l + h), np.maximum(xa, l) + 4.0)
        x[active] = np.where(accept, np.clip(newton, l, h), fallback)
        done |= h - l <= 1e-15 * np.maximum(1.0, np.abs(xa))
        active = active[~done]
    return x


# --- the two integrals --------------------------------------------------------

def _blocks(n: int, size: int | None = None):
    size = size or BLOCK_ROWS
    for start in range(0, n, size):
        yield slice(start, min(start + size, n))


def flow_integral(rheology: Rheology, wall_shear_rate, wall_shear_stress, power: int, sets=None):
    """q_k = int_0^gd_w (1 - (tau(s)/tau_w)^k) ds [1/s], so that Q = flow_scale * q_k.

    Vectorised over points (rows of the parameter sets ``sets``, see
    :meth:`Rheology.of_sets`); composite Gauss-Legendre in v = ln(s/gd_w).
    """
    g = np.asarray(wall_shear_rate, dtype=float)
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    out = np.empty(g.shape)
    for b in _blocks(g.size):
        s = g[b, None] * _E[None, :]
        f = 1.0 - (rheology.stress(s, _pick(sets, b)) / tau_w[b, None]) ** power
        out[b] = g[b] * (f @ _EW + _TAIL * f[:, 0])
    return out


def stress_deficit_integral(rheology: Rheology, lower, wall_shear_rate, wall_shear_stress, sets=None):
    """J = int_{s_r}^{gd_w} (tau_w - tau(s)) ds [Pa/s] for lower limits s_r >= 0.

    The panels of the rule are scaled onto [ln(s_r/gd_w), 0] (never wider
    than [-36, 0]; below gd_w e^-36 a one-point tail is added).
    """
    g = np.asarray(wall_shear_rate, dtype=float)
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    lower = np.asarray(lower, dtype=float)
    out = np.empty(g.shape)
    for b in _blocks(g.size):
        with np.errstate(divide="ignore"):
            a = np.log(lower[b] / g[b])
        scale = -np.maximum(a, -LOG_SPAN) / LOG_SPAN
        e = np.exp(_V[None, :] * scale[:, None])
        s = g[b, None] * e
        deficit = tau_w[b, None] - rheology.stress(s, _pick(sets, b))
        body = np.sum(deficit * e * _W[None, :], axis=1) * scale
        tail = np.where(a < -LOG_SPAN, _TAIL * deficit[:, 0], 0.0)
        out[b] = g[b] * (body + tail)
    return out


# --- operating points ---------------------------------------------------------

@dataclass(frozen=True)
class FlowState:
    """Solved operating points (1-D arrays, SI; (R, M) arrays from :func:`solve_sets`).

    Attributes: pressure_drop [Pa], flow_rate [m^3/s], wall_shear_stress [Pa],
    wall_shear_rate [1/s], max_velocity [m/s] (on the centre line, the plug
    velocity for a yield-stress fluid), plug_fraction [-] (plug radius / R or
    plug half-thickness / h), flowing (bool; False when tau_w <= tau_y or
    the point is at rest).
    """

    pressure_drop: np.ndarray
    flow_rate: np.ndarray
    wall_shear_stress: np.ndarray
    wall_shear_rate: np.ndarray
    max_velocity: np.ndarray
    plug_fraction: np.ndarray
    flowing: np.ndarray


def _method(method: str) -> str:
    if method not in METHODS:
        raise ParameterError(choice_message("method", str(method), METHODS))
    return method


def _closed_form(rheology: Rheology, geometry, method: str):
    """The model's closed-form flow rate q(tau_w, sets) for this geometry, or None."""
    function = rheology.declaration.extras.get(geometry.closed_form_key)
    if method == "generic" or function is None:
        return None
    scale = geometry.flow_scale
    return lambda tau_w, sets=None: geometry.closed_form_flow_rate(
        function, tau_w, rheology.values(sets)) / scale


def _q(rheology, geometry, closed, g, tau_w, sets=None):
    if closed is not None:
        return closed(tau_w, sets)
    return flow_integral(rheology, g, tau_w, geometry.stress_power, sets)


def operating_values(values, name: str) -> np.ndarray:
    """Operating points as a 1-D float array; non-negative and finite."""
    arr = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
    bad = ~(np.isfinite(arr) & (arr >= 0.0))
    if bad.any():
        raise GeometryError(
            f"{name} = {float(arr[bad][0]):g} is not a non-negative, finite number; "
            f"give {name} in SI units ({_SI[name]}), zero or above."
        )
    return arr


_SI = {"pressure drop": "Pa", "flow rate": "m^3/s", "wall shear stress": "Pa"}


def _finish(rheology, geometry, dp, q, tau_w, g, flowing, sets=None) -> FlowState:
    tau_y = np.broadcast_to(rheology.yield_at(sets), dp.shape)
    plug = np.zeros(dp.shape)
    with np.errstate(divide="ignore", invalid="ignore"):
        plug[flowing] = tau_y[flowing] / tau_w[flowing]
    plug[~flowing] = np.where(tau_y[~flowing] > 0, 1.0, 0.0)
    umax = np.zeros(dp.shape)
    if flowing.any():
        deficit = stress_deficit_integral(rheology, np.zeros(int(flowing.sum())), g[flowing],
                                          tau_w[flowing], _pick(sets, flowing))
        umax[flowing] = geometry.half_size * (deficit / tau_w[flowing])
    return FlowState(dp, q, tau_w, g, umax, plug, flowing)


def solve_pressure_drop(fluid, geometry, pressure_drop, method: str = "auto") -> FlowState:
    """Operating points from pressure drops dP [Pa] (1-D arrays out).

    A yield-stress fluid with tau_w <= tau_y does not flow: Q = 0 and
    ``flowing`` False (a result, not an error).
    """
    fluid, geometry, method = as_fluid(fluid), check_geometry(geometry), _method(method)
    rheology = rheology_of(fluid)
    dp = operating_values(pressure_drop, "pressure drop")
    return _from_pressure_drop(rheology, geometry, _closed_form(rheology, geometry, method), dp)[0]


def _from_pressure_drop(rheology, geometry, closed, dp, sets=None):
    """(FlowState, failed rows) from pressure drops [Pa]; rows of ``sets`` (see Rheology.of_sets)."""
    tau_w = geometry.wall_shear_stress(dp)
    g = rheology.shear_rate(tau_w, sets)
    failed = np.isnan(g)  # parameter sets only: a wall stress above the flow curve
    flowing = g > 0
    q = np.zeros(dp.shape)
    if flowing.any():
        q[flowing] = geometry.flow_scale * _q(rheology, geometry, closed, g[flowing], tau_w[flowing],
                                              _pick(sets, flowing))
    return _finish(rheology, geometry, dp, q, tau_w, g, flowing, sets), failed


def solve_flow_rate(fluid, geometry, flow_rate, method: str = "auto") -> FlowState:
    """Operating points from flow rates Q [m^3/s] (1-D arrays out).

    Solves Q(gd_w) = Q for the wall shear rate by Newton's method on ln gd_w,
    with the exact slope d ln q_k / d ln gd_w = k (gd_w - q_k) / q_k * n_w
    (n_w = d ln tau / d ln s at the wall; from differentiating the integral).
    Since q_k < gd_w, ln(q) bounds ln(gd_w) from below.  A model with a
    declared inverse is solved on ln tau_w instead (slope k (gd_w - q_k) / q_k).
    For a yield-stress fluid the pressure drop returned is the one needed,
    above the threshold.  Q = 0 gives dP = 0 (fluid at rest).
    """
    fluid, geometry, method = as_fluid(fluid), check_geometry(geometry), _method(method)
    rheology = rheology_of(fluid)
    q = operating_values(flow_rate, "flow rate")
    return _from_flow_rate(rheology, geometry, _closed_form(rheology, geometry, method), q)[0]


def _from_flow_rate(rheology, geometry, closed, q, sets=None):
    """(FlowState, failed rows) from flow rates [m^3/s]; rows of ``sets`` (see Rheology.of_sets).

    One fluid: a flow rate beyond the rising flow curve raises GeometryError;
    parameter sets: its row is marked failed.
    """
    flowing = q > 0
    g, tau_w = np.zeros(q.shape), np.zeros(q.shape)
    failed = np.zeros(q.shape, dtype=bool)
    if flowing.any():
        rows = _pick(sets, flowing)
        target = q[flowing] / geometry.flow_scale
        top = rheology.rising_limits(rows, target.size)
        solve = _wall_by_stress if rheology.has_inverse else _wall_by_rate
        g_f, tau_f = solve(rheology, geometry, closed, target, top, rows)
        limited = np.isfinite(top)
        if limited.any() and sets is None:
            _check_reached(rheology, geometry, closed, g_f, target)
        elif limited.any():
            short = np.zeros(target.shape, dtype=bool)
            short[limited] = _unreached(rheology, geometry, closed, g_f[limited], target[limited],
                                        rows[limited])
            failed[flowing] = short
        g[flowing], tau_w[flowing] = g_f, tau_f
    dp = geometry.pressure_drop(tau_w)
    return _finish(rheology, geometry, dp, q, tau_w, g, flowing, sets), failed


def _wall_by_rate(rheology, geometry, closed, target, top, sets):
    """(gd_w, tau_w) with q_k(gd_w) = target [1/s]: Newton on ln gd_w, bracket [ln target, top]."""
    k = geometry.stress_power
    log_target = np.log(target)

    def residual(x, idx):
        rows = _pick(sets, idx)
        with np.errstate(all="ignore"):  # far-out trial points may overflow; the bracket copes
            s = np.exp(x)
            tau_w = rheology.stress(s, rows)
            qk = _q(rheology, geometry, closed, s, tau_w, rows)
            slope = k * (s - qk) / qk * rheology.log_slope(s, rows)
            return np.log(qk) - log_target[idx], slope

    x0 = np.minimum(np.log(target * (k + 1.0) / k), top)  # the Newtonian wall shear rate
    g = np.exp(_safeguarded_newton(residual, x0, log_target.copy(), top.copy()))
    return g, rheology.stress(g, sets)


def _wall_by_stress(rheology, geometry, closed, target, top, sets):
    """(gd_w, tau_w) with q_k = target [1/s] for a model with a declared inverse gd(tau).

    Newton on y = ln tau_w with d ln q_k / d ln tau_w = k (gd_w - q_k) / q_k
    (the slope of :func:`solve_flow_rate` times d ln gd_w / d ln tau_w = 1/n_w),
    gd_w = gd(tau_w) from the declaration; bracket [ln tau(target), ln tau(top)]
    since q_k < gd_w.
    """
    k = geometry.stress_power
    log_target = np.log(target)
    rates = np.concatenate([target, target * (k + 1.0) / k, np.exp(np.minimum(top, 709.0))])
    with np.errstate(all="ignore"):
        low, start, high = np.log(rheology.stress(rates, None if sets is None else np.tile(sets, 3))
                                  ).reshape(3, -1)
    high = np.where(np.isfinite(top), high, np.inf)

    def residual(y, idx):
        rows = _pick(sets, idx)
        with np.errstate(all="ignore"):
            tau_w = np.exp(y)
            s = np.where(tau_w > rheology.yield_at(rows), rheology.inverse(tau_w, rows), 0.0)
            qk = _q(rheology, geometry, closed, s, tau_w, rows)
            return np.log(qk) - log_target[idx], k * (s - qk) / qk

    y = _safeguarded_newton(residual, np.clip(start, low, high), low, high)
    tau_w = np.exp(y)
    with np.errstate(all="ignore"):
        g = np.where(tau_w > rheology.yield_at(sets), rheology.inverse(tau_w, sets), 0.0)
    return g, tau_w


def _unreached(rheology, geometry, closed, g, target, sets):
    """True where the solved wall shear rate does not carry the flow rate (parameter sets)."""
    with np.errstate(all="ignore"):
        reached = _q(rheology, geometry, closed, g, rheology.stress(g, sets), sets)
        return ~(np.abs(np.log(reached / target)) < 1e-6)


def _check_reached(rheology, geometry, closed, g, target) -> None:
    """Raise GeometryError when a flow rate lies beyond the rising part of the flow curve."""
    with np.errstate(all="ignore"):
        reached = _q(rheology, geometry, closed, g, rheology.stress(g))
    short = ~(np.abs(np.log(reached / target)) < 1e-6)
    if np.any(short):
        top = np.array([np.exp(rheology.rising_limit)])
        stress = rheology.stress(top)
        most = float(_q(rheology, geometry, closed, top, stress)[0])
        # towards a plateau Q may keep growing (like ln gd_w for Cross with m = 1): past the point
        # where the stress is within _PLATEAU of it a solution may exist but cannot be computed
        shape, solution = ("stops rising at", "exists")
        if rheology.levels_off:
            shape = (f"levels off at a shear stress of {float(stress[0]):.4g} Pa and is within "
                     f"a relative {_PLATEAU:g} of it beyond")
            solution = "can be computed"
        raise GeometryError(
            f"A flow rate of {float(np.max(target[short])) * geometry.flow_scale:.4g} m^3/s is beyond "
            f"this fluid's flow curve ({rheology.fluid.model} {shape} a shear rate of "
            f"{float(top[0]):.3g} 1/s, carrying at most {most * geometry.flow_scale:.4g} m^3/s here), "
            f"so no laminar solution {solution}; lower the flow rate or check the model parameters."
        )


def solve_sets(declaration, values, geometry, given: str, operating, method: str = "auto") -> FlowState:
    """Operating points of R parameter sets of one model at once: (R, M) arrays, SI.

    ``values`` maps each parameter name to R values [SI] (one parameter set
    per row, broadcast against the M operating points); ``operating`` holds
    flow rates [m^3/s] when ``given`` is "flow_rate", else pressure drops
    [Pa] (1-D, already checked by :func:`operating_values`).  Nothing is
    raised for a set without a laminar solution at some point (its flow
    curve does not rise, or cannot carry the wall stress or the flow rate):
    its row is NaN in every quantity.  Same numerics as
    :func:`solve_flow_rate` and :func:`solve_pressure_drop`, row by row.
    """
    geometry, method = check_geometry(geometry), _method(method)
    rheology = Rheology.of_sets(declaration, values)
    operating = np.asarray(operating, dtype=float).ravel()
    count, points = rheology.size, operating.size
    sets = np.repeat(np.arange(count), points)
    usable = ~rheology.unusable[sets]
    solve = _from_flow_rate if given == "flow_rate" else _from_pressure_drop
    state, failed = solve(rheology, geometry, _closed_form(rheology, geometry, method),
                          np.tile(operating, count)[usable], sets[usable])
    bad = np.ones((count, points), dtype=bool)
    bad.ravel()[usable] = failed
    bad = bad.any(axis=1)

    def full(values, fill):
        out = np.full(count * points, fill, dtype=np.asarray(values).dtype)
        out[usable] = values
        out = out.reshape(count, points)
        if out.dtype.kind == "f":
            out[bad] = np.nan
        return out

    return FlowState(*(full(getattr(state, name), np.nan if name != "flowing" else False)
                       for name in FlowState.__dataclass_fields__))


# --- thin public wrappers -----------------------------------------------------

def _shaped(values, like):
    arr = np.asarray(like)
    return float(values[0]) if arr.ndim == 0 else values.reshape(arr.shape)


def flow_rate(fluid, geometry, pressure_drop, method: str = "auto"):
    """Flow rate Q [m^3/s] from the pressure drop dP [Pa] (scalar or array).

    >>> from rheofit.fluid import fluid
    >>> from rheofit.flow.geometry import Tube
    >>> water = fluid("newtonian", mu=1e-3)
    >>> round(flow_rate(water, Tube(1e-3, 1.0), 1000.0), 12)   # pi R^4 dP / (8 mu L)
    2.4544e-08
    """
    return _shaped(solve_pressure_drop(fluid, geometry, pressure_drop, method).flow_rate, pressure_drop)


def pressure_drop(fluid, geometry, flow_rate, method: str = "auto"):
    """Pressure drop dP [Pa] needed for the flow rate Q [m^3/s] (scalar or array)."""
    return _shaped(solve_flow_rate(fluid, geometry, flow_rate, method).pressure_drop, flow_rate)


def wall_shear_rate(fluid, wall_shear_stress):
    """Wall shear rate gd_w [1/s] with tau(gd_w) = tau_w [Pa]; 0 at or below a yield stress."""
    stress = np.asarray(wall_shear_stress, dtype=float)
    flat = operating_values(stress, "wall shear stress")
    return _shaped(rheology_of(as_fluid(fluid)).shear_rate(flat), stress)


def velocity_profile(fluid, geometry, wall_shear_stress, position):
    """Velocity u [m/s] at distances ``position`` [m] from the centre line.

    u(r) = (R/tau_w) [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ],
    tau_r = tau_w r / R (slit: h for R); zero everywhere when tau_w <= tau_y.
    ``wall_shear_stress`` is one value [Pa]; ``position`` any array within
    [0, R] (slit: [0, h]).
    """
    fluid, geometry = as_fluid(fluid), check_geometry(geometry)
    tau_w = float(operating_values(wall_shear_stress, "wall shear stress")[0])
    r = np.asarray(position, dtype=float)
    half = geometry.half_size
    if np.any(~np.isfinite(r)) or np.any(r < 0) or np.any(r > half * (1 + 1e-12)):
        raise GeometryError(
            f"Profile positions must lie between 0 (centre line) and {half:.4g} m (the wall); "
            f"got values from {np.nanmin(r):.4g} to {np.nanmax(r):.4g} m."
        )
    rheology = rheology_of(fluid)
    fraction = np.minimum(r.ravel() / half, 1.0)
    u = profile_at_fractions(rheology, geometry, np.array([tau_w]), fraction[None, :])
    return u.reshape(r.shape) if r.ndim else float(u[0, 0])


def profile_at_fractions(rheology: Rheology, geometry, wall_shear_stress, fraction):
    """Velocities u [m/s] at r/R = ``fraction`` (shape (M, P)) for M wall stresses [Pa]."""
    tau_w = np.asarray(wall_shear_stress, dtype=float)
    fraction = np.asarray(fraction, dtype=float)
    g = rheology.shear_rate(tau_w)
    u = np.zeros(fraction.shape)
    rows = g > 0
    if rows.any():
        u[rows] = profile_parts(rheology, geometry.half_size, tau_w[rows], g[rows], fraction[rows])[0]
    return u


def profile_parts(rheology: Rheology, half_size: float, wall_shear_stress, wall_shear_rate, fraction):
    """(u [m/s], local shear rate [1/s]) at r/R = ``fraction`` (M, P) for M flowing points.

    u = (R/tau_w) [ int_{s_r}^{gd_w} (tau_w - tau(s)) ds + s_r (tau_w - tau_r) ], tau_r = tau_w r/R.
    """
    frac = np.asarray(fraction, dtype=float)
    tw = np.broadcast_to(np.asarray(wall_shear_stress, float)[:, None], frac.shape).ravel()
    gw = np.broadcast_to(np.asarray(wall_shear_rate, float)[:, None], frac.shape).ravel()
    tau_r = tw * frac.ravel()
    s_r = np.minimum(rheology.shear_rate(tau_r), gw)
    deficit = stress_deficit_integral(rheology, s_r, gw, tw)
    u = half_size * ((deficit + s_r * (tw - tau_r)) / tw)
    return u.reshape(frac.shape), s_r.reshape(frac.shape)


def profile_by_shear_rate(rheology: Rheology, wall_shear_stress, wall_shear_rate, shear_rate):
    """u / R [1/s] where the local shear rate is ``shear_rate`` (M, P) [1/s], for M flowing points.

    The profile parametrised by its local shear rate s in [0, gd_w] instead
    of the position (r/R = tau(s)/tau_w; s = 0 in a plug):

        u(s) / R = [ int_s^{gd_w} (tau_w - tau(s')) ds' + s (tau_w - tau(s)) ] / tau_w,

    the same integral as :func:`profile_parts` with no inverse of the flow
    curve to solve (R: the half size, radius or half gap).
    """
    s = np.asarray(shear_rate, dtype=float)
    tw = np.broadcast_to(np.asarray(wall_shear_stress, float)[:, None], s.shape).ravel()
    gw = np.broadcast_to(np.asarray(wall_shear_rate, float)[:, None], s.shape).ravel()
    flat = s.ravel()
    deficit = stress_deficit_integral(rheology, flat, gw, tw)
    with np.errstate(invalid="ignore"):
        local = np.where(flat > 0, rheology.stress(flat), 0.0)
    return ((deficit + flat * (tw - local)) / tw).reshape(s.shape)
