"""Parameter sweeps over a base design, scored on a task region (private).

``Sweep`` follows the fit convention: the constructor only stores its arguments;
``run()`` validates, computes (in chunks, on any ``concurrent.futures.Executor`` or a
``dask.distributed`` client) and sets ``results_``.
"""

import itertools
import os
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

import numpy as np

from ..model._arm import Arm
from ..model._errors import DesignError
from ..model._paths import get_value, path_choices
from ._scores import SCORE_COLUMNS, design_scores, scores_from_arrays

__all__ = ["Sweep"]


def _score_chunk(spec, region, map_options, chunk, keep_maps):
    """Worker: score every (index, values) of ``chunk``; errors are returned, not raised."""
    from ._maps import map_arrays, metric_map

    base = Arm.from_dict(spec)
    out = []
    for index, values in chunk:
        try:
            arm = base.with_values(values)
            if keep_maps:
                ds = metric_map(arm, region, **map_options)
                out.append((index, design_scores(ds), None, ds))
            else:
                arrays, _, _, _, arm, attrs = map_arrays(arm, region, **map_options)
                out.append((index, scores_from_arrays(arrays, attrs, arm.joint_names), None, None))
        except (DesignError, ValueError) as exc:
            out.append((index, None, str(exc), None))
    return out


class Sweep:
    """Score variants of a base design over a task region.

    Parameters
    ----------
    base : Arm
    vary : dict of {path: sequence}, optional
        Parameter paths (see :func:`inertia_review.parameter_paths`) and their values; the
        full grid of combinations is scored. Give either ``vary`` or ``variants``.
    variants : sequence of dict, optional
        An explicit list of ``{path: value}`` variants.
    region : Task or region, optional
        Where to score (default: the base design's own ``[task]``).
    keep_maps : bool, default False
        Keep every variant's map in ``maps_`` (memory grows with the sweep).
    chunk_size : int, optional
        Variants per task sent to a worker (default: about eight tasks per worker, at most 25).
    progress : bool, default True
        Show a progress bar (``tqdm.auto``, notebook-aware).
    **map_options
        Passed to :func:`inertia_review.metric_map` (accel_mps2, posture, ...).

    Attributes
    ----------
    results_ : xarray.Dataset
        One variable per score (``SCORE_COLUMNS``) plus ``error`` (empty where the variant
        was valid), over the swept parameters (full grid) or a ``variant`` dimension.
    maps_ : list of xarray.Dataset or None
    """

    def __init__(self, base, *, vary=None, variants=None, region=None, keep_maps=False,
                 chunk_size=None, progress=True, **map_options):
        self.base = base
        self.vary = vary
        self.variants = variants
        self.region = region
        self.keep_maps = keep_maps
        self.chunk_size = chunk_size
        self.progress = progress
        self.map_options = map_options

    def _plan(self):
        if (self.vary is None) == (self.variants is None):
            raise ValueError("give either `vary` (a full grid) or `variants` (a list), not both")
        spec = self.base.to_dict()
        if self.vary is not None:
            if not isinstance(self.vary, dict) or not self.vary:
                raise ValueError("`vary` must be a non-empty dict of {parameter path: values}")
            names = list(self.vary)
            axes = []
            for name in names:
                _known(spec, name)
                if path_choices(name) is not None:        # a name (e.g. a tube's material)
                    values = _names(spec, name, self.vary[name])
                else:
                    try:
                        values = np.asarray(self.vary[name], dtype=float).ravel()
                    except (TypeError, ValueError):
                        values = np.array([np.nan])
                    if values.size == 0 or not np.all(np.isfinite(values)):
                        raise ValueError(f"`vary['{name}']` must be a non-empty list of finite "
                                         "numbers")
                axes.append(values)
            combos = [{n: (str(v) if a.dtype.kind == "U" else float(v))
                       for n, v, a in zip(names, c, axes)} for c in itertools.product(*axes)]
            return names, axes, combos
        combos = [dict(v) for v in self.variants]
        if not combos:
            raise ValueError("`variants` must not be empty")
        names = sorted({k for v in combos for k in v})
        for name in names:
            _known(spec, name)
        return names, None, combos

    def run(self, executor=None):
        """Score every variant; returns ``self`` with ``results_`` (and ``maps_``) set.

        ``executor``: any ``concurrent.futures.Executor``, or a ``dask.distributed.Client``
        (its ``get_executor()`` is used); default: a local process pool on all cores.
        """
        import xarray as xr
        from tqdm.auto import tqdm

        names, axes, combos = self._plan()
        region = self.region if self.region is not None else self.base.task
        if region is None:
            raise ValueError(f"design '{self.base.name}' has no [task] region: pass `region`")
        spec = self.base.to_dict()
        own_pool = executor is None
        if own_pool:
            executor = ProcessPoolExecutor(max_workers=os.cpu_count() or 1)
        workers = getattr(executor, "_max_workers", None)
        if hasattr(executor, "get_executor"):            # a dask.distributed Client
            workers = len(executor.scheduler_info().get("workers", {})) or None
            executor = executor.get_executor()
        workers = workers or os.cpu_count() or 2
        size = self.chunk_size or max(1, min(25, len(combos) // (8 * workers)))
        indexed = list(enumerate(combos))
        chunks = [indexed[i:i + size] for i in range(0, len(combos), size)]
        scores = [None] * len(combos)
        errors = [""] * len(combos)
        maps = [None] * len(combos) if self.keep_maps else None
        bar = tqdm(total=len(combos), desc=f"sweep {self.base.name}", disable=not self.progress)
        try:
            pending = set()
            todo = iter(chunks)
            limit = 2 * workers                            # bounded work in flight
            while True:
                while len(pending) < limit:
                    chunk = next(todo, None)
                    if chunk is None:
                        break
                    pending.add(executor.submit(_score_chunk, spec, region, self.map_options,
                                                chunk, self.keep_maps))
                if not pending:
                    break
                done, pending = wait(pending, return_when=FIRST_COMPLETED)
                for future in done:
                    for index, row, error, ds in future.result():
                        scores[index] = row
                        errors[index] = error or ""
                        if maps is not None:
                            maps[index] = ds
                        bar.update(1)
        finally:
            bar.close()
            if own_pool:
                executor.shutdown()

        data = {}
        for column in SCORE_COLUMNS:
            kind = object if column == "headroom_worst_joint" else float
            fill = "" if kind is object else np.nan
            data[column] = np.array([r[column] if r else fill for r in scores], dtype=kind)
        data["error"] = np.array(errors, dtype=object)
        if axes is not None:
            shape = tuple(len(a) for a in axes)
            dims = tuple(names)
            coords = {name: (name, values) for name, values in zip(names, axes)}
            variables = {k: (dims, v.reshape(shape)) for k, v in data.items()}
        else:
            dims = ("variant",)
            coords = {"variant": np.arange(len(combos))}
            for name in names:
                kind = str if path_choices(name) is not None else float
                coords[name] = ("variant", np.array([c.get(name, get_value(spec, name))
                                                     for c in combos], kind))
            variables = {k: (dims, v) for k, v in data.items()}
        ds = xr.Dataset(variables, coords=coords)
        for column, (units, definition) in SCORE_COLUMNS.items():
            ds[column].attrs.update(units=units, long_name=column.replace("_", " "),
                                    description=definition)
        ds.attrs.update(design=self.base.name, parameters=list(names), n_variants=len(combos),
                        n_failed=int(sum(bool(e) for e in errors)))
        self.results_ = ds
        self.maps_ = maps
        return self

    def best(self, score="gci", maximize=True):
        """(values dict, score) of the best valid variant by ``score``."""
        ds = self.results_
        if score not in ds:
            raise KeyError(f"No score named '{score}'. Scores: {', '.join(SCORE_COLUMNS)}")
        values = ds[score].values.astype(float)
        flat = np.where(np.isfinite(values), values if maximize else -values, -np.inf).ravel()
        index = int(np.argmax(flat))
        point = ds[score].isel(dict(zip(ds[score].dims, np.unravel_index(index, values.shape))))
        return ({name: (str(point[name].values) if point[name].dtype.kind == "U"
                        else float(point[name])) for name in ds.attrs["parameters"]},
                float(point))


def _names(spec, name, entry):
    """The names (a str array) given for a path that holds a name; DesignError otherwise."""
    from ..model._paths import apply_values

    values = [entry] if isinstance(entry, str) else list(entry)
    if not values or not all(isinstance(v, str) for v in values):
        reason = (f"holds a name (one of {', '.join(path_choices(name))}): give a list of "
                  f"names; got {entry!r}")
        raise DesignError(spec["name"], [(name, reason)])
    for value in values:
        apply_values(spec, {name: value})           # an unknown name raises, naming the path
    return np.array(values, dtype=str)


def _known(spec, name):
    """Raise DesignError naming the path if ``name`` is not a parameter of ``spec``."""
    try:
        get_value(spec, name)
    except (KeyError, ValueError) as exc:
        raise DesignError(spec["name"], [(name, str(exc.args[0]).split(": ", 1)[-1])]) from None
    return True
