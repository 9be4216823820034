"""Design search: optimise parameter paths for scores under constraints (private).

``DesignSearch`` follows the fit convention: the constructor only stores its arguments;
``run()`` validates them, searches and sets ``results_`` (every evaluated design, with
its scores, feasibility and the Pareto set marked). One objective: scipy's
``differential_evolution`` (vectorised: each generation is scored as one batch of variants
through ``score_variants``). Several objectives: pymoo's NSGA-II (Deb et al. 2002).

Objectives and constraints name score columns (``SCORE_COLUMNS``; a new score column plugs
in by name) or parameter paths (e.g. ``derived.reach_m``).
"""

import operator
import re

import numpy as np

from ..model._errors import DesignError
from ..model._paths import apply_values, get_value, path_choices
from ._scores import SCORE_COLUMNS
from ._variants import score_variants, variant_params

__all__ = ["DesignSearch", "check_space", "pareto_mask"]

_OPS = {">=": operator.ge, "<=": operator.le}
_CONSTRAINT = re.compile(r"^\s*(\S+)\s*(>=|<=|==)\s*(\S+)\s*$")


def pareto_mask(costs):
    """Non-dominated rows of ``costs`` (S, m), every column minimised (brute force, O(S^2 m))."""
    costs = np.asarray(costs, float)
    keep = np.ones(len(costs), dtype=bool)
    for i in range(len(costs)):
        no_worse = np.all(costs <= costs[i], axis=1)
        better = np.any(costs < costs[i], axis=1)
        if np.any(no_worse & better):
            keep[i] = False
    return keep


def _parse_objective(obj):
    if isinstance(obj, str):
        sense, _, name = obj.partition(":")
        if not name:
            raise ValueError(f"objective {obj!r}: write 'max:score' or 'min:score'")
    else:
        name, sense = obj
    if sense not in ("max", "min"):
        raise ValueError(f"objective {obj!r}: the sense must be 'max' or 'min'")
    return name, sense


def _parse_constraint(con):
    if isinstance(con, str):
        m = _CONSTRAINT.match(con)
        if not m:
            raise ValueError(f"constraint {con!r}: write 'name >= value' or 'name <= value'")
        name, op, value = m.group(1), m.group(2), m.group(3)
    else:
        name, op, value = con
    if op == "==":
        raise ValueError(f"constraint {con!r}: use a bound ('>=' or '<='); an equality on a "
                         "score cannot be met exactly by a search")
    if op not in _OPS:
        raise ValueError(f"constraint {con!r}: the operator must be '>=' or '<='")
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"constraint {con!r}: {value!r} is not a number") from None
    return name, op, value


def check_space(spec, space):
    """Validate a search space against a design spec (dict from ``Arm.to_dict``).

    Returns (paths, bounds (d, 2), choices): ``choices[i]`` is None for a continuous
    path, else the allowed values (numbers, or names (a str array) for a path that holds a
    name such as a tube's material) and ``bounds[i]`` the index range. Raises
    DesignError naming the path for an unknown path, bad bounds, an unknown name or an end
    of the range that design validation does not accept.
    """
    if not isinstance(space, dict) or not space:
        raise ValueError("`space` must be a non-empty dict of {parameter path: (low, high) "
                         "or [choices]}")
    paths, bounds, choices = [], [], []
    for path, entry in space.items():
        try:
            get_value(spec, path)
        except (KeyError, ValueError) as exc:
            raise DesignError(spec["name"], [(path, str(exc.args[0]).split(": ", 1)[-1])]) \
                from None
        names = path_choices(path)
        if names is not None:                   # a name from a closed vocabulary
            options = [entry] if isinstance(entry, str) else entry
            if isinstance(entry, tuple) or not all(isinstance(v, str) for v in options):
                raise DesignError(spec["name"], [(path, (
                    f"holds a name (one of {', '.join(names)}): give a list of names to "
                    f"choose from, not bounds; got {entry!r}"))])
            options = np.array(list(dict.fromkeys(options)), dtype=str)
            if options.size < 2:
                raise DesignError(spec["name"], [(path, "choices must be a list of at least "
                                                        "two different names")])
            for name in options:
                try:
                    variant_params(spec, {path: str(name)})
                except (DesignError, ValueError) as exc:
                    reason = exc.problems[0][1] if isinstance(exc, DesignError) and \
                        getattr(exc, "problems", None) else str(exc)
                    raise DesignError(spec["name"], [(path, reason)]) from None
            paths.append(path)
            bounds.append((0.0, options.size - 1.0))
            choices.append(options)
            continue
        if isinstance(entry, tuple) and len(entry) == 2:
            low, high = float(entry[0]), float(entry[1])
            if not (np.isfinite(low) and np.isfinite(high) and low < high):
                raise DesignError(spec["name"], [(path, (f"bounds must be finite with low < "
                                                        f"high; got {entry!r}"))])
            ends, options = (low, high), None
        else:
            try:
                options = np.asarray(list(entry), float)
            except (TypeError, ValueError):
                raise DesignError(spec["name"], [(path, (f"choices must be numbers (the path "
                                                        f"holds a number); got {entry!r}"))]) \
                    from None
            if options.size < 2 or not np.all(np.isfinite(options)):
                raise DesignError(spec["name"], [(path, ("choices must be a list of at least "
                                                        "two finite numbers"))])
            ends = (float(options.min()), float(options.max()))
        for end in (options if options is not None else ends):
            try:
                variant_params(spec, {path: float(end)})
            except (DesignError, ValueError) as exc:
                raise DesignError(spec["name"], [(path, (f"the value {float(end):g} of the "
                                                        f"search space is not accepted: {exc}"))]) \
                    from None
        paths.append(path)
        bounds.append(ends if options is None else (0.0, options.size - 1.0))
        choices.append(options)
    return paths, bounds, choices


def check_independent(spec, paths, bounds, choices=None):
    """Refuse paths that overwrite each other when varied together (DesignError naming one).

    A link's length and the link ratio both set that link: the designs evaluated would not
    have the values a result table reports. Checked at three points of the space.
    """
    choices = choices if choices is not None else [None] * len(paths)
    if len(paths) > 1:
        # three probes (a third, the middle, two thirds of every range), so that paths which
        # agree by chance at one point of the space are still caught
        for f in (1.0 / 3.0, 0.5, 2.0 / 3.0):
            probe = {p: (b[0] + f * (b[1] - b[0]) if c is None else _choice(c, 0))
                     for p, b, c in zip(paths, bounds, choices)}
            apply_values(spec, probe)


def _choice(options, index):
    """Entry ``index`` of a choice list: a float, or a str for names."""
    value = options[int(index)]
    return str(value) if options.dtype.kind == "U" else float(value)


class DesignSearch:
    """Search parameter paths of a design for the best scores under constraints.

    Parameters
    ----------
    arm : Arm
        The baseline design.
    space : dict of {path: (low, high) or list of values}
        Parameter paths (see :func:`inertia_review.parameter_paths`) with continuous bounds,
        or a list of allowed numbers (a discrete choice), or for a path that holds a name
        (``joints[j].link.tube.material``) a list of names, e.g. ``["aluminium_6061",
        "cfrp"]``. Choices are searched by their index (integers for the optimisers); the
        table holds the chosen number or name.
    objectives : sequence of str or (name, sense)
        ``'max:gci'``, ``'min:moving_mass_kg'``...: score columns or parameter paths.
    constraints : sequence of str or (name, op, value), optional
        ``'reachable_fraction >= 1'``, ``'headroom_worst >= 0.2'``, ``'derived.reach_m <= 0.7'``.
    region : Task or region, optional
        Where to score (default: the design's own ``[task]``).
    generations, population : int
        Search effort: generations (``maxiter``) and population size per generation.
    accel_mps2, posture, payload_kg
        Passed to the scoring (as for :func:`inertia_review.metric_map`).
    progress : bool, default True
        A tqdm progress bar over generations.

    Attributes
    ----------
    results_ : xarray.Dataset
        Over ``evaluation``: the parameter values, every score, ``feasible`` (all
        constraints met), ``violation`` (sum of the constraint shortfalls), ``pareto``
        (feasible and non-dominated; for one objective, the best feasible design) and
        ``error`` (why a variant was invalid).
    best_ : dict
        Parameter values of the best feasible design (first objective for several).
    """

    def __init__(self, arm, space, objectives, constraints=(), region=None, *, generations=30,
                 population=16, accel_mps2=None, posture="elbow_up", payload_kg=None,
                 tolerance=1e-8, progress=True):
        self.arm = arm
        self.space = space
        self.objectives = objectives
        self.constraints = constraints
        self.region = region
        self.generations = generations
        self.population = population
        self.accel_mps2 = accel_mps2
        self.posture = posture
        self.payload_kg = payload_kg
        self.tolerance = tolerance
        self.progress = progress

    # ------------------------------------------------------------------ checks
    def _plan(self):
        spec = self.arm.to_dict()
        paths, bounds, choices = check_space(spec, self.space)
        check_independent(spec, paths, bounds, choices)
        objectives = [_parse_objective(o) for o in self.objectives]
        if not objectives:
            raise ValueError("give at least one objective, e.g. 'max:gci'")
        constraints = [_parse_constraint(c) for c in self.constraints]
        for name in [o[0] for o in objectives] + [c[0] for c in constraints]:
            if name not in SCORE_COLUMNS and name != "headroom_worst_joint":
                try:
                    get_value(spec, name)
                except (KeyError, ValueError):
                    raise ValueError(f"'{name}' is neither a score ({', '.join(SCORE_COLUMNS)}) "
                                     "nor a parameter path of the design") from None
                if path_choices(name) is not None:
                    raise ValueError(f"'{name}' holds a name, not a number: it cannot be an "
                                     "objective or a constraint (search over it in `space`)")
            if name == "headroom_worst_joint":
                raise ValueError("'headroom_worst_joint' is a joint name, not a number")
        return spec, paths, np.array(bounds, float), choices, objectives, constraints

    # ------------------------------------------------------------------ evaluation
    def _values(self, x):
        out = {}
        for path, xi, options in zip(self._paths, x, self._choices):
            out[path] = _choice(options, np.clip(np.rint(xi), 0, options.size - 1)) \
                if options is not None else float(xi)
        return out

    def _evaluate(self, X):
        """Score rows (S,) of the designs X (S, d); appends them to the history."""
        variants = [self._values(x) for x in X]
        chunks = [variants]
        if self._executor is not None and len(variants) > 1:
            parts = max(1, min(len(variants), self._workers))
            chunks = [list(c) for c in np.array_split(np.array(variants, dtype=object), parts)]
            futures = [self._executor.submit(score_variants, self.arm, c, self._region,
                                             accel_mps2=self.accel_mps2, posture=self.posture,
                                             payload_kg=self.payload_kg) for c in chunks]
            results = [r for f in futures for r in f.result()]
        else:
            results = score_variants(self.arm, variants, self._region, accel_mps2=self.accel_mps2,
                                     posture=self.posture, payload_kg=self.payload_kg)
        F, G = [], []
        for values, (row, error) in zip(variants, results):
            entry = {"values": values, "row": row, "error": error}
            entry["objective"] = np.array([self._number(values, row, name) * (-1 if s == "max"
                                                                               else 1)
                                           for name, s in self._objectives])
            shortfall = []
            for name, op, bound in self._constraints:
                v = self._number(values, row, name)
                short = (bound - v) if op == ">=" else (v - bound)
                shortfall.append(np.inf if not np.isfinite(v) else max(short, 0.0))
            entry["violation"] = float(np.sum(shortfall)) if shortfall else 0.0
            if row is None or not np.all(np.isfinite(entry["objective"])):
                entry["violation"] = np.inf
            self._history.append(entry)
            F.append(entry["objective"])
            G.append(shortfall)
        if self._bar is not None:
            self._bar.update(1)
        return np.array(F), np.array(G, float).reshape(len(X), len(self._constraints))

    def _number(self, values, row, name):
        if name in SCORE_COLUMNS:
            return float(row[name]) if row is not None else np.nan
        if name in values:
            return values[name]
        return float(get_value(apply_values(self._spec, values), name))

    # ------------------------------------------------------------------ run
    def run(self, executor=None, random_state=None):
        """Search; returns ``self`` with ``results_`` and ``best_`` set.

        ``executor``: None (in this process), any ``concurrent.futures.Executor`` or a
        ``dask.distributed.Client``: each generation's variants are split across its workers.
        """
        from tqdm.auto import tqdm

        spec, paths, bounds, choices, objectives, constraints = self._plan()
        region = self.region if self.region is not None else self.arm.task
        if region is None:
            raise ValueError(f"design '{self.arm.name}' has no [task] region: pass `region`")
        self._spec, self._paths, self._choices = spec, paths, choices
        self._objectives, self._constraints, self._region = objectives, constraints, region
        self._history = []
        self._workers = 1
        if executor is not None and hasattr(executor, "get_executor"):   # dask Client
            self._workers = len(executor.scheduler_info().get("workers", {})) or 1
            executor = executor.get_executor()
        elif executor is not None:
            self._workers = getattr(executor, "_max_workers", None) or 2
        self._executor = executor
        self._bar = tqdm(total=self.generations + 1, desc=f"search {self.arm.name}",
                         disable=not self.progress)
        try:
            if len(objectives) == 1:
                self._run_single(bounds, choices, random_state)
            else:
                self._run_multi(bounds, choices, random_state)
        finally:
            self._bar.close()
            self._bar = None
            self._executor = None
        self.results_ = self._table()
        feasible = self.results_["feasible"].values
        if not np.any(feasible):
            detail = "; ".join(
                f"{name} {op} {bound:g} (best reached: {self._best_reached(name, op):.4g})"
                for name, op, bound in constraints)
            errors = [e for e in self.results_["error"].values if e] \
                if "error" in self.results_ else []
            if errors and len(errors) == self.results_.sizes["evaluation"]:
                detail = f"every evaluated variant was invalid, e.g. {errors[0]}"
            detail = detail or "every evaluated variant was invalid"
            raise ValueError(f"infeasible problem: no evaluated design of '{self.arm.name}' "
                             f"meets the constraints: {detail}")
        first = np.where(feasible, self.results_["objective_0"].values, np.inf)
        i = int(np.argmin(first))
        self.best_ = self._row_values(i)
        return self

    def _best_reached(self, name, op):
        values = [self._number(e["values"], e["row"], name) for e in self._history]
        values = np.array([v for v in values if np.isfinite(v)])
        if not values.size:
            return np.nan
        return float(values.max() if op == ">=" else values.min())

    def _run_single(self, bounds, choices, random_state):
        from scipy.optimize import differential_evolution

        def cost(xt):                                  # xt (d, S): vectorised
            F, G = self._evaluate(np.atleast_2d(xt.T))
            penalty = np.where(np.isfinite(G).all(axis=1), G.sum(axis=1), 1e6)
            return np.where(np.isfinite(F[:, 0]), F[:, 0], 1e6) + 1e3 * penalty

        integrality = np.array([c is not None for c in choices])
        size = max(1, int(np.ceil(self.population / len(bounds))))
        differential_evolution(cost, bounds, vectorized=True, updating="deferred",
                               seed=random_state, maxiter=self.generations, popsize=size,
                               tol=self.tolerance, atol=0.0, polish=False,
                               integrality=integrality if integrality.any() else None)

    def _run_multi(self, bounds, choices, random_state):
        from pymoo.algorithms.moo.nsga2 import NSGA2
        from pymoo.core.problem import Problem
        from pymoo.optimize import minimize

        search = self
        n_con = len(self._constraints)

        class _Problem(Problem):
            def __init__(self):
                super().__init__(n_var=len(bounds), n_obj=len(search._objectives),
                                 n_ieq_constr=n_con, xl=bounds[:, 0], xu=bounds[:, 1])

            def _evaluate(self, X, out, *args, **kwargs):
                F, G = search._evaluate(X)
                out["F"] = np.where(np.isfinite(F), F, 1e6)
                if n_con:
                    out["G"] = np.where(np.isfinite(G), G, 1e6) - 0.0
                    out["G"] = np.where(out["G"] > 0.0, out["G"], -1e-12)

        seed = None if random_state is None else int(np.random.default_rng(random_state)
                                                      .integers(2 ** 31 - 1))
        minimize(_Problem(), NSGA2(pop_size=self.population), ("n_gen", self.generations),
                 seed=seed, verbose=False)

    def _table(self):
        import xarray as xr

        h = self._history
        count = len(h)
        coords = {"evaluation": np.arange(count)}
        for path, options in zip(self._paths, self._choices):
            kind = str if options is not None and options.dtype.kind == "U" else float
            column = np.array([e["values"][path] for e in h], dtype=kind)
            if kind is str:           # names: fixed-width str, written as netCDF-4 strings
                coords[path] = ("evaluation", column, {"choices": ", ".join(options)})
            else:
                coords[path] = ("evaluation", column)
        data = {}
        for column in SCORE_COLUMNS:
            if column == "headroom_worst_joint":
                data[column] = ("evaluation", np.array([e["row"][column] if e["row"] else ""
                                                        for e in h], dtype=object))
            else:
                data[column] = ("evaluation", np.array([e["row"][column] if e["row"] else np.nan
                                                        for e in h], float),
                                {"units": SCORE_COLUMNS[column][0],
                                 "description": SCORE_COLUMNS[column][1]})
        objective = np.array([e["objective"] for e in h]).reshape(count, -1)
        violation = np.array([e["violation"] for e in h])
        feasible = violation == 0.0
        for j, (name, sense) in enumerate(self._objectives):
            data[f"objective_{j}"] = ("evaluation", objective[:, j],
                                      {"description": f"{sense} {name}, as a cost "
                                                      f"({'negated' if sense == 'max' else 'as is'})"})
        pareto = np.zeros(count, dtype=bool)
        index = np.flatnonzero(feasible)
        if index.size:
            if objective.shape[1] == 1:
                pareto[index[np.argmin(objective[index, 0])]] = True
            else:
                pareto[index[pareto_mask(objective[index])]] = True
        data["violation"] = ("evaluation", violation)
        data["feasible"] = ("evaluation", feasible)
        data["pareto"] = ("evaluation", pareto)
        data["error"] = ("evaluation", np.array([e["error"] for e in h], dtype=object))
        ds = xr.Dataset(data, coords=coords)
        ds.attrs.update(design=self.arm.name, parameters=list(self._paths),
                        objectives=[f"{s}:{n}" for n, s in self._objectives],
                        constraints=[f"{n} {op} {b:g}" for n, op, b in self._constraints],
                        n_evaluations=count)
        return ds

    # ------------------------------------------------------------------ designs
    def design(self, evaluation=None):
        """The Arm of one evaluated design (default: the best feasible one), validated."""
        values = self.best_ if evaluation is None else self._row_values(int(evaluation))
        return self.arm.with_values(values)

    def _row_values(self, i):
        """{path: value} of evaluation ``i`` (a float, or a str for a path holding a name)."""
        out = {}
        for p in self._paths:
            value = self.results_[p].values[i]
            out[p] = str(value) if self.results_[p].dtype.kind in "UO" else float(value)
        return out

    def pareto_designs(self):
        """Arms of the Pareto set (feasible, non-dominated), in evaluation order."""
        return [self.design(int(i)) for i in np.flatnonzero(self.results_["pareto"].values)]

    def save_design(self, path, evaluation=None):
        """Write one evaluated design (default: the best) as a TOML design file (atomic)."""
        from ..model._design_io import save_design
        return save_design(self.design(evaluation), path)
