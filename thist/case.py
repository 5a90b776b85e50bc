"""Case files: TOML in, a validated :class:`Case` with SI values out.

Every error names the file, the field path and the problem. The schema is
documented in the README ("Case file reference"); this module is its only reader.
"""

from __future__ import annotations

import difflib
import hashlib
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from thist.errors import InputError
from thist.methods import get_method
from thist.methods.base import Method
from thist.methods.inelastic import DAMPING_CHOICES, SolverOptions
from thist.record import Record, read_record
from thist.scaling import TargetSpectrum, target_from_table, target_two_parameter
from thist.springs import LAWS, story_springs
from thist.structure import Structure, general_model, shear_chain
from thist.units import US_CUSTOMARY, DisplayUnits, parse_quantity, parse_unit

_MISSING = object()


class _Table:
    """A TOML table being read: typed getters and a check for unknown keys."""

    def __init__(self, data: Any, path: str, file: str):
        if not isinstance(data, dict):
            raise InputError(f"expected a table, got {type(data).__name__}", path or None, file)
        self.data, self.path, self.file = data, path, file
        self.used: set[str] = set()

    def where(self, key: str) -> str:
        return f"{self.path}.{key}" if self.path else key

    def error(self, key: str | None, problem: str) -> InputError:
        return InputError(problem, self.where(key) if key else (self.path or None), self.file)

    def raw(self, key: str, default: Any = _MISSING) -> Any:
        self.used.add(key)
        if key in self.data:
            return self.data[key]
        if default is _MISSING:
            # A typo of a required key is reported as the typo, not as a missing key.
            near = difflib.get_close_matches(
                key, [k for k in self.data if k not in self.used], n=1, cutoff=0.6
            )
            if near:
                raise self.error(near[0], f"unknown key; did you mean {key!r}?")
            raise self.error(key, "is required")
        return default

    def has(self, key: str) -> bool:
        return key in self.data

    def quantity(self, key: str, dimension: str, default: Any = _MISSING) -> float:
        value = self.raw(key, default)
        if value is default and default is not _MISSING:
            return value
        return parse_quantity(value, dimension, self.where(key), self.file)

    def ratio(self, key: str, default: Any = _MISSING, lo: float = 0.0, hi: float = 1.0) -> float:
        x = self.quantity(key, "dimensionless", default)
        if x is not None and not lo <= x <= hi:
            raise self.error(key, f"must lie in [{lo:g}, {hi:g}], got {x:g}")
        return x

    def string(self, key: str, default: Any = _MISSING, choices: tuple[str, ...] = ()) -> str:
        value = self.raw(key, default)
        if not isinstance(value, str):
            raise self.error(key, f"expected text, got {value!r}")
        if choices and value not in choices:
            near = difflib.get_close_matches(value, choices, n=1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise self.error(key, f"must be one of {', '.join(choices)}; got {value!r}{hint}")
        return value

    def number(self, key: str, default: Any = _MISSING) -> float:
        value = self.raw(key, default)
        if (
            isinstance(value, bool)
            or not isinstance(value, int | float)
            or not math.isfinite(value)
        ):
            raise self.error(key, f"expected a finite number, got {value!r}")
        return float(value)

    def integer(self, key: str, default: Any = _MISSING, lo: int = 0) -> int:
        value = self.raw(key, default)
        if isinstance(value, bool) or not isinstance(value, int) or value < lo:
            raise self.error(key, f"expected a whole number >= {lo}, got {value!r}")
        return value

    def boolean(self, key: str, default: Any = _MISSING) -> bool:
        value = self.raw(key, default)
        if not isinstance(value, bool):
            raise self.error(key, f"expected true or false, got {value!r}")
        return value

    def table(self, key: str, default: Any = _MISSING) -> _Table:
        return _Table(self.raw(key, default), self.where(key), self.file)

    def list(self, key: str, default: Any = _MISSING) -> list:
        value = self.raw(key, default)
        if value is default and default is not _MISSING:
            return value
        if not isinstance(value, list):
            raise self.error(key, f"expected a list, got {value!r}")
        return value

    def limit_with_basis(self, key: str, what: str) -> tuple[float | None, str]:
        """An optional ratio limit in (0, 1) and its required basis ``<key>_basis``.

        Thist holds no code values: a limit the user gives must come with where it
        comes from, and a basis without a limit is an error.
        """
        basis_key = f"{key}_basis"
        limit = self.quantity(key, "dimensionless", None)
        basis = self.string(basis_key, "")
        if limit is not None:
            if not 0 < limit < 1:
                raise self.error(key, f"must lie in (0, 1), got {limit:g}")
            if not basis.strip():
                raise self.error(basis_key, f"state the basis of {what}")
        elif basis:
            raise self.error(basis_key, f"given without {key}")
        return limit, basis

    def finish(self) -> None:
        """Refuse keys nobody asked for, naming the nearest valid key."""
        for key in self.data:
            if key not in self.used:
                near = difflib.get_close_matches(key, sorted(self.used), n=1, cutoff=0.5)
                hint = f"; did you mean {near[0]!r}?" if near else ""
                raise self.error(key, f"unknown key{hint}")


@dataclass(frozen=True)
class DampingSpec:
    """Damping as the case file states it (SI; built against the modes later).

    ``model`` is one of rayleigh, modal, stiffness, matrix, none. ``ratio`` is the
    ratio for rayleigh/stiffness/modal-for-all; ``ratios`` per mode for modal;
    ``modes`` (1-based) or ``periods`` (s) are the anchors; ``matrix`` (N·s/m) for
    a given C.
    """

    model: str
    ratio: float = 0.0
    ratios: tuple[float, ...] = ()
    modes: tuple[int, ...] = ()
    periods: tuple[float, ...] = ()
    matrix: np.ndarray | None = None


@dataclass(frozen=True)
class ScalingSpec:
    """Scaling of the record to the user's target spectrum (SI).

    Exactly one of ``period`` (s), ``period_t1`` (multiple of T₁), ``period_range``
    (s, s) and ``range_t1`` (multiples of T₁) is set.
    """

    target: TargetSpectrum
    period: float | None = None
    period_t1: float | None = None
    period_range: tuple[float, float] | None = None
    range_t1: tuple[float, float] | None = None
    bounds: tuple[float, float] = (0.0, math.inf)
    damping: float = 0.05

    def periods_for(self, t1: float) -> tuple[float | None, tuple[float, float] | None]:
        """(period, period_range) in seconds for a structure whose T₁ is ``t1`` (s)."""
        if self.period is not None:
            return self.period, None
        if self.period_t1 is not None:
            return self.period_t1 * t1, None
        if self.period_range is not None:
            return None, self.period_range
        lo, hi = self.range_t1  # type: ignore[misc]
        return None, (lo * t1, hi * t1)


@dataclass(frozen=True)
class RecordSpec:
    """A record as the case gives it: the file read, the processing and the scaling.

    ``processing`` holds plain step dicts in SI for :func:`thist.processing.apply_steps`.
    """

    record: Record
    processing: tuple[dict[str, Any], ...] = ()
    scaling: ScalingSpec | None = None


@dataclass(frozen=True)
class MethodSpec:
    """One method requested by the case: its name, user parameters and built object."""

    name: str
    params: dict[str, float]
    method: Method

    @property
    def label(self) -> str:
        """The name, with the user's parameters when there are any: ``hht(alpha=-0.1)``."""
        if not self.params:
            return self.name
        inner = ", ".join(f"{k}={v:g}" for k, v in self.params.items())
        return f"{self.name}({inner})"


@dataclass(frozen=True)
class InelasticSpec:
    """Settings of inelastic runs: damping with yielding springs and the solver.

    ``damping`` is ``"initial"`` (Rayleigh stiffness part on the initial stiffness)
    or ``"tangent"`` (on the tangent stiffness); ``options`` the Newton–Raphson
    settings of the implicit methods.
    """

    damping: str = "initial"
    options: SolverOptions = field(default_factory=SolverOptions)


@dataclass(frozen=True)
class AnalysisSpec:
    """Analysis settings, SI.

    ``dt`` None means the record's own step; ``duration`` None means the record's.
    """

    methods: tuple[MethodSpec, ...]
    dt: float | None
    duration: float | None
    allow_coarse_dt: bool
    inelastic: InelasticSpec = field(default_factory=lambda: InelasticSpec())


@dataclass(frozen=True)
class CheckSpec:
    """Settings of the accuracy checks and the user's drift-ratio limit.

    ``drift_ratio_limit`` is None unless the user states one with its basis.
    """

    mass_ratio: float = 0.9
    steps_per_period: float = 10.0
    drift_ratio_limit: float | None = None
    drift_ratio_limit_basis: str = ""


@dataclass(frozen=True)
class Case:
    """A validated case, all values SI.

    Attributes
    ----------
    path : str
        The case file.
    name : str
        File stem, used for the default output folder.
    text : str
        The file's text (echoed in the report).
    sha256 : str
        SHA-256 of the file's bytes.
    title, notes : str
        Free text from the user.
    structure : Structure
    damping : DampingSpec
    motion : RecordSpec
        The record file as read, with its processing steps and scaling rule.
    analysis : AnalysisSpec
    checks : CheckSpec
    display : DisplayUnits
    """

    path: str
    name: str
    text: str
    sha256: str
    title: str
    notes: str
    structure: Structure
    damping: DampingSpec
    motion: RecordSpec
    analysis: AnalysisSpec
    checks: CheckSpec
    display: DisplayUnits = field(default_factory=DisplayUnits)

    @property
    def record(self) -> Record:
        """The record file as read (before processing and scaling)."""
        return self.motion.record


def load_case(path: str | Path) -> Case:
    """Read and validate a case file.

    Parameters
    ----------
    path : str or Path
        A TOML case file (schema in the README).

    Returns
    -------
    Case

    Raises
    ------
    InputError
        Anything wrong with the file or the record it names; the message names
        the file, the field and the problem.
    """
    path = Path(path)
    data, text, doc = read_toml(path, "case")
    top = _Table(doc, "", path.name)
    title = top.string("title")
    notes = top.string("notes", "")
    tables = parse_model_tables(top)
    record = parse_record(top.table("record"), path.parent)
    top.finish()
    return case_from_tables(path, data, text, title, notes, tables, record)


def case_from_tables(
    path: Path,
    data: bytes,
    text: str,
    title: str,
    notes: str,
    tables: tuple[Structure, DampingSpec, AnalysisSpec, CheckSpec, DisplayUnits],
    motion: RecordSpec,
) -> Case:
    """A Case from the file it was read from, its model tables and its record."""
    structure, damping, analysis, checks, display = tables
    return Case(
        str(path),
        path.stem,
        text,
        hashlib.sha256(data).hexdigest(),
        title,
        notes,
        structure,
        damping,
        motion,
        analysis,
        checks,
        display,
    )


def read_toml(path: Path, what: str) -> tuple[bytes, str, dict[str, Any]]:
    """The bytes, text and parsed TOML of a ``what`` file ("case", "study"), or an InputError."""
    if not path.is_file():
        raise InputError(f"{what} file not found", None, str(path))
    data = path.read_bytes()
    try:
        text = data.decode("utf-8")
        return data, text, tomllib.loads(text)
    except UnicodeDecodeError:
        raise InputError("not UTF-8 text", None, path.name) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", None, path.name) from None


def parse_model_tables(
    top: _Table,
) -> tuple[Structure, DampingSpec, AnalysisSpec, CheckSpec, DisplayUnits]:
    """The model tables of a case: structure, damping, analysis, checks and display.

    Case files and study files with inline tables share this reader, so both take
    the same keys and give the same errors.
    """
    structure = _structure(top.table("structure"), top.file)
    damping = _damping(top.table("damping", {"model": "none"}), structure.n)
    analysis = _analysis(top.table("analysis"))
    checks = _checks(top.table("checks", {}))
    display = _display(top.table("display", {}))
    return structure, damping, analysis, checks, display


def _matrix(t: _Table, key: str, dimension: str) -> np.ndarray:
    m = t.table(key)
    unit_si = parse_unit(m.raw("unit"), dimension, m.where("unit"), t.file)
    values = m.raw("values")
    m.finish()
    try:
        arr = np.array(values, dtype=float)
    except (TypeError, ValueError):
        raise m.error("values", "expected a list of rows of numbers") from None
    if arr.ndim != 2 or arr.shape[0] != arr.shape[1]:
        raise m.error("values", f"must be a square matrix, got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise m.error("values", "must contain finite numbers only")
    return arr * unit_si


def _structure(t: _Table, fname: str) -> Structure:
    form = t.string("form", "chain", ("chain", "matrices"))
    try:
        if form == "chain":
            stories = t.list("stories")
            if not stories:
                raise t.error("stories", "needs at least one story")
            m, k, h, labels = [], [], [], []
            laws, fy, dy, alpha = [], [], [], []
            for i, item in enumerate(stories):
                s = _Table(item, f"{t.where('stories')}[{i}]", fname)
                m.append(s.quantity("mass", "mass"))
                k.append(s.quantity("stiffness", "force/length"))
                h.append(s.quantity("height", "length"))
                labels.append(s.string("label", f"L{i + 1}"))
                for key, value in (("mass", m[-1]), ("stiffness", k[-1]), ("height", h[-1])):
                    if not value > 0:
                        raise s.error(key, f"must be positive, got {value:g}")
                laws.append(s.string("law", "elastic", LAWS))
                fy.append(s.quantity("yield_force", "force", math.nan))
                dy.append(s.quantity("yield_drift", "length", math.nan))
                alpha.append(s.ratio("post_yield_ratio", 0.0, hi=0.999))
                if laws[-1] == "elastic":
                    for key in ("yield_force", "yield_drift", "post_yield_ratio"):
                        if s.has(key):
                            raise s.error(key, "given for an elastic story; set law as well")
                elif math.isnan(fy[-1]) == math.isnan(dy[-1]):
                    raise s.error(
                        None, f"a {laws[-1]} story needs yield_force or yield_drift (one of them)"
                    )
                s.finish()
            t.finish()
            springs = None
            if any(law != "elastic" for law in laws):
                try:
                    springs = story_springs(laws, k, fy, dy, alpha)
                except InputError as exc:
                    key, _, rest = (exc.field or "").partition("[")
                    idx = rest.split("]")[0]
                    raise InputError(
                        exc.problem, f"{t.where('stories')}[{idx}].{key}", fname
                    ) from None
            return shear_chain(m, k, h, tuple(labels), springs)
        M = _matrix(t, "mass", "mass")
        K = _matrix(t, "stiffness", "force/length")
        r = t.raw("influence", None)
        heights = t.list("heights", None)
        labels = t.list("labels", None)
        t.finish()
        h = None
        if heights is not None:
            h = [
                parse_quantity(x, "length", f"{t.where('heights')}[{i}]", fname)
                for i, x in enumerate(heights)
            ]
        if labels is not None and (
            len(labels) != M.shape[0] or not all(isinstance(x, str) for x in labels)
        ):
            raise t.error("labels", f"must be {M.shape[0]} names")
        if r is not None:
            try:
                r = np.array(r, dtype=float)
            except (TypeError, ValueError):
                raise t.error("influence", "expected a list of numbers") from None
        return general_model(M, K, r, h, tuple(labels) if labels else None)
    except InputError as exc:
        if exc.file:
            raise
        raise exc.located(fname, t.path) from None


def _damping(t: _Table, n: int) -> DampingSpec:
    model = t.string("model", choices=("rayleigh", "modal", "stiffness", "matrix", "none"))
    if model == "none":
        t.finish()
        return DampingSpec("none")
    if model == "matrix":
        C = _matrix(t, "matrix", "force*time/length")
        t.finish()
        if C.shape != (n, n):
            raise t.error("matrix", f"must be {n} x {n}")
        return DampingSpec("matrix", matrix=C)
    if model == "modal":
        if t.has("ratios"):
            ratios = tuple(
                parse_quantity(x, "dimensionless", f"{t.where('ratios')}[{i}]", t.file)
                for i, x in enumerate(t.list("ratios"))
            )
            if len(ratios) != n:
                raise t.error("ratios", f"needs one ratio per mode ({n}), got {len(ratios)}")
            if any(not 0 <= z < 1 for z in ratios):
                raise t.error("ratios", "each ratio must lie in [0, 1)")
            t.finish()
            return DampingSpec("modal", ratios=ratios)
        ratio = t.ratio("ratio", hi=0.999)
        t.finish()
        return DampingSpec("modal", ratio=ratio)
    ratio = t.ratio("ratio", hi=0.999)
    count = 2 if model == "rayleigh" else 1
    key = "modes" if model == "rayleigh" else "mode"
    pkey = "periods" if model == "rayleigh" else "period"
    modes: tuple[int, ...] = ()
    periods: tuple[float, ...] = ()
    if t.has(key) == t.has(pkey):
        raise t.error(None, f"give either {key} or {pkey} for {model} damping")
    if t.has(key):
        raw = t.raw(key)
        raw = raw if isinstance(raw, list) else [raw]
        if len(raw) != count or not all(
            isinstance(x, int) and not isinstance(x, bool) for x in raw
        ):
            raise t.error(key, f"expected {count} mode number(s), got {t.raw(key)!r}")
        if any(not 1 <= x <= n for x in raw) or len(set(raw)) != count:
            raise t.error(key, f"mode numbers must be distinct and between 1 and {n}")
        modes = tuple(raw)
    else:
        raw = t.raw(pkey)
        raw = raw if isinstance(raw, list) else [raw]
        if len(raw) != count:
            raise t.error(pkey, f"expected {count} period(s)")
        periods = tuple(parse_quantity(x, "time", t.where(pkey), t.file) for x in raw)
        if any(not p > 0 for p in periods) or len(set(periods)) != count:
            raise t.error(pkey, "periods must be distinct and positive")
    t.finish()
    return DampingSpec(model, ratio=ratio, modes=modes, periods=periods)


def parse_record(t: _Table, base: Path) -> RecordSpec:
    """Read a record table (file, layout, unit, processing, scaling) into a RecordSpec.

    Parameters
    ----------
    t : _Table
        The table, e.g. ``[record]`` of a case or one record of a study.
    base : Path
        Folder that relative paths are taken from.
    """
    file = t.string("file")
    layout = t.string("layout", "columns", ("columns", "values"))
    unit = t.string("unit")
    unit_si = parse_unit(unit, "acceleration", t.where("unit"), t.file)
    scale = t.number("scale", 1.0)
    if not scale > 0:
        raise t.error("scale", f"must be positive, got {scale:g}")
    header_lines = t.integer("header_lines", 0)
    dt = None
    time_col: int | str = 1
    acc_col: int | str = 2
    if layout == "values":
        dt = t.quantity("dt", "time")
        if not dt > 0:
            raise t.error("dt", "must be positive")
    else:
        time_col = t.raw("time_column", 1)
        acc_col = t.raw("acceleration_column", 2)
        for key, v in (("time_column", time_col), ("acceleration_column", acc_col)):
            if isinstance(v, bool) or not isinstance(v, int | str):
                raise t.error(key, "expected a column name or a position (1 = first)")
    steps = tuple(
        _processing_step(_Table(item, f"{t.where('processing')}[{i}]", t.file))
        for i, item in enumerate(t.list("processing", []))
    )
    scaling = _scaling(t.table("scaling"), base) if t.has("scaling") else None
    t.used.add("scaling")
    t.finish()
    path = Path(file) if Path(file).is_absolute() else base / file
    record = read_record(
        path,
        layout=layout,
        unit_si=unit_si,
        unit=unit,
        scale=scale,
        dt=dt,
        time_column=time_col,
        acceleration_column=acc_col,
        header_lines=header_lines,
        field_prefix=t.path,
        case_file=t.file,
    )
    return RecordSpec(record, steps, scaling)


#: Processing steps: case-file key -> (key of thist.processing, dimension or kind).
_STEP_KEYS: dict[str, dict[str, tuple[str, str]]] = {
    "baseline": {"order": ("order", "int")},
    "filter": {
        "kind": ("kind", "text"),
        "low": ("f_low", "frequency"),
        "high": ("f_high", "frequency"),
        "order": ("order", "int"),
        "pad": ("pad_time", "time"),
    },
    "taper": {"start": ("start", "time"), "end": ("end", "time")},
    "pad": {"before": ("before", "time"), "after": ("after", "time")},
    "resample": {"dt": ("dt", "time")},
}


def _processing_step(t: _Table) -> dict[str, Any]:
    name = t.string("step", choices=tuple(_STEP_KEYS))
    out: dict[str, Any] = {"step": name}
    for key, (target, kind) in _STEP_KEYS[name].items():
        if not t.has(key):
            t.used.add(key)
            continue
        if kind == "int":
            out[target] = t.integer(key)
        elif kind == "text":
            out[target] = t.string(key, choices=("bandpass", "highpass", "lowpass"))
        else:
            out[target] = t.quantity(key, kind)
    t.finish()
    return out


def _scaling(t: _Table, base: Path) -> ScalingSpec:
    basis = t.string("basis")
    if not basis.strip():
        raise t.error("basis", "state where the target spectrum comes from")
    try:
        if t.has("target_file") == t.has("target_shape"):
            raise t.error(None, "give either target_file or target_shape")
        if t.has("target_file"):
            path = Path(t.string("target_file"))
            path = path if path.is_absolute() else base / path
            unit_si = parse_unit(t.raw("psa_unit"), "acceleration", t.where("psa_unit"), t.file)
            periods, psa = _read_target_table(path, t.where("target_file"), t.file)
            target = target_from_table(periods, psa * unit_si, basis)
        else:
            shape = t.table("target_shape")
            target = target_two_parameter(
                shape.quantity("s_short", "acceleration"),
                shape.quantity("s_one", "acceleration"),
                shape.quantity("t_long", "time"),
                basis,
            )
            shape.finish()
        t.used.update(("target_file", "target_shape", "psa_unit"))
        given = [k for k in ("period", "period_t1", "period_range", "range_t1") if t.has(k)]
        if len(given) != 1:
            raise t.error(None, "give exactly one of period, period_t1, period_range, range_t1")
        kw: dict[str, Any] = {}
        if t.has("period"):
            kw["period"] = t.quantity("period", "time")
        if t.has("period_t1"):
            kw["period_t1"] = t.number("period_t1")
        if t.has("period_range"):
            rng = t.list("period_range")
            if len(rng) != 2:
                raise t.error("period_range", "expected two periods")
            kw["period_range"] = tuple(
                parse_quantity(x, "time", t.where("period_range"), t.file) for x in rng
            )
        if t.has("range_t1"):
            rng = t.list("range_t1")
            if len(rng) != 2 or not all(
                isinstance(x, int | float) and not isinstance(x, bool) for x in rng
            ):
                raise t.error("range_t1", "expected two multiples of T1, e.g. [0.2, 2.0]")
            kw["range_t1"] = (float(rng[0]), float(rng[1]))
        for key in ("period_range", "range_t1"):
            if key in kw and not 0 < kw[key][0] < kw[key][1]:
                raise t.error(key, "must be increasing and positive")
        for key in ("period", "period_t1"):
            if key in kw and not kw[key] > 0:
                raise t.error(key, "must be positive")
        lo = t.number("factor_min", 0.0)
        hi = t.number("factor_max") if t.has("factor_max") else math.inf
        t.used.add("factor_max")
        if not 0 <= lo < hi:
            raise t.error("factor_min", "need 0 <= factor_min < factor_max")
        damping = t.ratio("damping", 0.05, hi=0.999)
        t.finish()
    except InputError as exc:
        if exc.file:
            raise
        raise exc.located(t.file, t.path) from None
    return ScalingSpec(target, bounds=(lo, hi), damping=damping, **kw)


def _read_target_table(path: Path, field_name: str, file: str) -> tuple[np.ndarray, np.ndarray]:
    """Two columns, period (s) and PSA; '#' comments and a row of names allowed."""
    if not path.is_file():
        raise InputError(f"target file not found: {path}", field_name, file)
    rows = []
    for lineno, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        toks = [x for x in s.replace(",", " ").replace(";", " ").split() if x]
        try:
            rows.append([float(toks[0]), float(toks[1])])
        except (ValueError, IndexError):
            if rows:
                raise InputError(f"line {lineno}: expected two numbers", None, path.name) from None
    if len(rows) < 2:
        raise InputError("a target table needs at least 2 rows of period, PSA", None, path.name)
    arr = np.asarray(rows)
    return arr[:, 0], arr[:, 1]


def parse_method_entry(entry: Any, where: str, file: str | None) -> MethodSpec:
    """One entry of ``analysis.methods``: a name or a table ``{name = ..., param = ...}``."""
    if isinstance(entry, str):
        name, params = entry, {}
    elif isinstance(entry, dict):
        mt = _Table(entry, where, file or "")
        name = mt.string("name")
        params = {}
        for key in entry:
            if key != "name":
                params[key] = mt.number(key)
        mt.finish()
    else:
        raise InputError(f"expected a method name or a table, got {entry!r}", where, file)
    try:
        method = get_method(name, **params)
    except InputError as exc:
        raise InputError(exc.problem, where, file) from None
    return MethodSpec(name, params, method)


def _analysis(t: _Table) -> AnalysisSpec:
    entries = t.list("methods")
    if not entries:
        raise t.error("methods", "needs at least one method")
    methods = tuple(
        parse_method_entry(e, f"{t.where('methods')}[{i}]", t.file) for i, e in enumerate(entries)
    )
    labels = [m.label for m in methods]
    for i, label in enumerate(labels):
        if label in labels[:i]:
            raise t.error(f"methods[{i}]", f"method {label!r} is listed twice")
    dt = t.quantity("dt", "time", None)
    if dt is not None and not dt > 0:
        raise t.error("dt", "must be positive")
    duration = t.quantity("duration", "time", None)
    if duration is not None and not duration > 0:
        raise t.error("duration", "must be positive")
    allow = t.boolean("allow_coarse_dt", False)
    inelastic = _inelastic(t.table("inelastic", {}))
    t.finish()
    return AnalysisSpec(methods, dt, duration, allow, inelastic)


def _inelastic(t: _Table) -> InelasticSpec:
    damping = t.string("damping", "initial", DAMPING_CHOICES)
    defaults = SolverOptions()
    options = SolverOptions(
        iteration=t.string("iteration", defaults.iteration, ("newton", "modified-newton")),
        force_tolerance=t.number("force_tolerance", defaults.force_tolerance),
        energy_tolerance=t.number("energy_tolerance", defaults.energy_tolerance),
        max_iterations=t.integer("max_iterations", defaults.max_iterations, lo=1),
        max_halvings=t.integer("max_halvings", defaults.max_halvings, lo=0),
    )
    try:
        options.check()
    except InputError as exc:
        raise InputError(exc.problem, t.where(exc.field or ""), t.file) from None
    t.finish()
    return InelasticSpec(damping, options)


def _checks(t: _Table) -> CheckSpec:
    mass_ratio = t.ratio("mass_ratio", 0.9)
    if not mass_ratio > 0:
        raise t.error("mass_ratio", "must be positive")
    spp = t.number("steps_per_period", 10.0)
    if not spp > 0:
        raise t.error("steps_per_period", "must be positive")
    limit, basis = t.limit_with_basis(
        "drift_ratio_limit",
        "the drift-ratio limit (e.g. the governing code and risk category)",
    )
    t.finish()
    return CheckSpec(mass_ratio, spp, limit, basis)


_DISPLAY_DIMS = {
    "length": "length",
    "small_length": "length",
    "force": "force",
    "mass": "mass",
    "acceleration": "acceleration",
    "stiffness": "force/length",
    "moment": "moment",
    "velocity": "velocity",
}


def _display(t: _Table) -> DisplayUnits:
    system = t.string("system", "SI", ("SI", "US"))
    base = US_CUSTOMARY if system == "US" else DisplayUnits()
    kwargs = {}
    for key, dim in _DISPLAY_DIMS.items():
        label = t.raw(key, None)
        if label is not None:
            if not isinstance(label, str):
                raise t.error(key, f"expected a unit name, got {label!r}")
            kwargs[key] = (label, parse_unit(label, dim, t.where(key), t.file))
    t.finish()
    return DisplayUnits(**{**base.__dict__, **kwargs})
