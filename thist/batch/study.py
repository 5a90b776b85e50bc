"""Study files: TOML in, a validated :class:`Study` with SI values out.

A study is one structure (a case file, or the case tables written inline) run
against a list of records with one or more methods: a *suite*; or the same at a
list of intensity levels: an *incremental dynamic analysis* (IDA), with stop
rules and damage states for fragility functions. Records take exactly the keys
of a case file's ``[record]`` table (read by :func:`thist.case.parse_record`),
plus a ``name``; every error names the file, the field path and the problem,
as for case files. The schema is documented in the README ("Study file
reference"); this module is its only reader.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from thist import case as _case
from thist.case import (
    Case,
    MethodSpec,
    RecordSpec,
    _Table,
    case_from_tables,
    parse_method_entry,
    parse_model_tables,
    parse_record,
    read_toml,
)
from thist.errors import InputError
from thist.modal import modal
from thist.units import parse_unit

#: Study kinds.
KINDS = ("suite", "ida")

#: Intensity measures of an IDA: PSA(T, ζ) of the record, or its PGA.
MEASURES = ("psa", "pga")

#: Most intensity levels an IDA may list (a guard against a range with a tiny step).
MAX_LEVELS = 200


@dataclass(frozen=True)
class StudyRecord:
    """One record of a study: its name (unique in the study) and the record as read."""

    name: str
    spec: RecordSpec


@dataclass(frozen=True)
class IdaSpec:
    """Intensity levels and stop rules of an IDA, SI.

    Attributes
    ----------
    measure : {"psa", "pga"}
        Intensity measure: pseudo-spectral acceleration at ``period`` and
        ``damping``, or peak ground acceleration.
    unit : str
        The unit the user gave levels in (for tables and figures).
    unit_si : float
        Size of that unit, m/s².
    levels : tuple of float
        Intensity levels, m/s², strictly increasing.
    period : float
        Period of the PSA, s (the model's T₁ unless the study gives one).
    damping : float
        Damping ratio of the PSA (default 0.05).
    collapse_drift_ratio : float or None
        A record stops, counted as collapsed, after the first level whose peak
        story drift ratio exceeds this; None: only non-convergence stops it.
    collapse_basis : str
        Where the collapse drift ratio comes from.
    """

    measure: str
    unit: str
    unit_si: float
    levels: tuple[float, ...]
    period: float
    damping: float
    collapse_drift_ratio: float | None
    collapse_basis: str

    @property
    def label(self) -> str:
        """``PSA(T = 0.62 s, 5 %)`` or ``PGA``."""
        if self.measure == "pga":
            return "PGA"
        return f"PSA(T = {self.period:.3g} s, {self.damping:.0%})"


@dataclass(frozen=True)
class DamageState:
    """A damage state of the fragility functions: peak story drift ratio and its basis."""

    name: str
    drift_ratio: float
    basis: str


@dataclass(frozen=True)
class Study:
    """A validated study, all values SI.

    Attributes
    ----------
    path, name, text : str
        The study file, its stem (default output folder) and its text.
    sha256 : str
        Hash of everything the results depend on: the study file's bytes, the
        case file's bytes and every record file's bytes. A resume refuses a
        store made with another hash.
    title, notes : str
    kind : {"suite", "ida"}
    case : Case
        The structure, damping, analysis settings, checks and display units;
        its record is replaced by each study record in turn.
    records : tuple of StudyRecord
    methods : tuple of MethodSpec
        The methods each record is run with.
    ida : IdaSpec or None
    damage_states : tuple of DamageState
        IDA only; ordered by increasing drift ratio.
    keep_histories : tuple of str
        Names of records whose jobs store full response histories.
    t1 : float
        First-mode period of the model, s.
    """

    path: str
    name: str
    text: str
    sha256: str
    title: str
    notes: str
    kind: str
    case: Case
    records: tuple[StudyRecord, ...]
    methods: tuple[MethodSpec, ...]
    ida: IdaSpec | None
    damage_states: tuple[DamageState, ...]
    keep_histories: tuple[str, ...]
    t1: float

    @property
    def levels(self) -> tuple[float | None, ...]:
        """Intensity levels, m/s² (one ``None`` for a suite)."""
        return (None,) if self.ida is None else self.ida.levels


def load_study(path: str | Path) -> Study:
    """Read and validate a study file.

    Parameters
    ----------
    path : str or Path
        A TOML study file (schema in the README, "Study file reference").

    Returns
    -------
    Study

    Raises
    ------
    InputError
        Anything wrong with the study file, its case file or a record file; the
        message names the file, the field and the problem.
    """
    path = Path(path)
    data, text, doc = read_toml(path, "study")
    top = _Table(doc, "", path.name)
    title = top.string("title")
    notes = top.string("notes", "")
    kind = top.string("kind", choices=KINDS)
    records = _records(top, path.parent)
    case, case_bytes = _structure_case(top, path, (title, notes, text), data, records[0].spec)
    methods = _methods(top, case)
    case = _overrides(top, case, methods)
    keep = _keep_histories(top, records)
    t1 = float(modal(case.structure.M, case.structure.K, case.structure.r).periods[0])
    ida = None
    damage_states: tuple[DamageState, ...] = ()
    if kind == "ida":
        if case.structure.story_heights is None:
            raise top.error(
                "kind", "an IDA needs story drift ratios: give the structure story heights"
            )
        ida = _ida(top.table("ida"), t1)
        damage_states = _damage_states(top)
        for i, rec in enumerate(records):
            if rec.spec.scaling is not None:
                raise top.error(
                    f"records[{i}].scaling",
                    "an IDA scales each record to the intensity levels; remove the scaling rule",
                )
    else:
        for key in ("ida", "damage_states"):
            if top.has(key):
                raise top.error(key, 'only for kind = "ida"')
    top.finish()
    h = hashlib.sha256(data)
    h.update(case_bytes)
    for rec in records:
        h.update(rec.name.encode() + b"\0" + rec.spec.record.sha256.encode())
    return Study(
        str(path),
        path.stem,
        text,
        str(h.hexdigest()),
        title,
        notes,
        kind,
        case,
        records,
        methods,
        ida,
        damage_states,
        keep,
        t1,
    )


def _records(top: _Table, base: Path) -> tuple[StudyRecord, ...]:
    items = top.list("records")
    if not items:
        raise top.error("records", "needs at least one record")
    defaults = top.raw("record_defaults", {})
    if not isinstance(defaults, dict):
        raise top.error("record_defaults", f"expected a table, got {defaults!r}")
    if "name" in defaults or "file" in defaults:
        key = "name" if "name" in defaults else "file"
        raise top.error(f"record_defaults.{key}", "belongs to each record, not to the defaults")
    out: list[StudyRecord] = []
    names: set[str] = set()
    for i, item in enumerate(items):
        where = f"records[{i}]"
        if not isinstance(item, dict):
            raise top.error(where, f"expected a table, got {item!r}")
        rest = {**defaults, **{k: v for k, v in item.items() if k != "name"}}
        try:
            spec = parse_record(_Table(rest, where, top.file), base)
        except InputError as exc:
            raise _from_defaults(exc, where, item, defaults) from None
        if "name" in item:
            name = item["name"]
            if not isinstance(name, str) or not name.strip():
                raise top.error(f"{where}.name", f"expected a name, got {name!r}")
        else:
            name = Path(str(item.get("file", ""))).stem
        if name in names:
            raise top.error(f"{where}.name", f"record name {name!r} is used twice")
        names.add(name)
        out.append(StudyRecord(name, spec))
    return tuple(out)


def _from_defaults(exc: InputError, where: str, item: dict, defaults: dict) -> InputError:
    """Name ``record_defaults.KEY`` in an error caused by a key the record took from there."""
    f = exc.field or ""
    if f.startswith(where + "."):
        key = f[len(where) + 1 :].split(".")[0].split("[")[0]
        if key in defaults and key not in item:
            return InputError(exc.problem, "record_defaults" + f[len(where) :], exc.file)
    return exc


def _structure_case(
    top: _Table, path: Path, texts: tuple[str, str, str], data: bytes, first: RecordSpec
) -> tuple[Case, bytes]:
    """The study's case: a case file named by ``case``, or the case tables inline."""
    inline = [k for k in ("structure", "damping", "analysis", "checks", "display") if top.has(k)]
    if top.has("case"):
        if inline:
            raise top.error(inline[0], "give either case = FILE or the case tables inline")
        rel = Path(top.string("case"))
        case_path = rel if rel.is_absolute() else path.parent / rel
        if not case_path.is_file():
            raise top.error("case", f"case file not found: {case_path}")
        case = _case.load_case(case_path)
        return dataclasses.replace(case, motion=first), case_path.read_bytes()
    top.used.add("case")
    if not top.has("structure"):
        raise top.error("case", "give case = FILE, or the [structure] and [analysis] tables")
    # The same readers as a case file, so inline tables take the same keys and give
    # the same errors.
    title, notes, text = texts
    return case_from_tables(path, data, text, title, notes, parse_model_tables(top), first), b""


def _methods(top: _Table, case: Case) -> tuple[MethodSpec, ...]:
    if not top.has("methods"):
        top.used.add("methods")
        return case.analysis.methods
    entries = top.list("methods")
    if not entries:
        raise top.error("methods", "needs at least one method")
    specs = tuple(parse_method_entry(e, f"methods[{i}]", top.file) for i, e in enumerate(entries))
    labels = [m.label for m in specs]
    for i, label in enumerate(labels):
        if label in labels[:i]:
            raise top.error(f"methods[{i}]", f"method {label!r} is listed twice")
    return specs


def _overrides(top: _Table, case: Case, methods: tuple[MethodSpec, ...]) -> Case:
    """Apply the study's ``dt`` and ``duration`` (and methods) to the case's analysis."""
    a = case.analysis
    dt = top.quantity("dt", "time", None)
    if dt is not None and not dt > 0:
        raise top.error("dt", "must be positive")
    duration = top.quantity("duration", "time", None)
    if duration is not None and not duration > 0:
        raise top.error("duration", "must be positive")
    a = dataclasses.replace(
        a,
        methods=methods,
        dt=a.dt if dt is None else dt,
        duration=a.duration if duration is None else duration,
    )
    return dataclasses.replace(case, analysis=a)


def _keep_histories(top: _Table, records: tuple[StudyRecord, ...]) -> tuple[str, ...]:
    names = top.list("keep_histories", [])
    known = [r.name for r in records]
    for i, n in enumerate(names):
        if n not in known:
            raise top.error(
                f"keep_histories[{i}]", f"no record named {n!r}; records are {', '.join(known)}"
            )
    return tuple(names)


def _levels(t: _Table, unit_si: float) -> tuple[float, ...]:
    raw = t.raw("levels")
    if isinstance(raw, dict):
        r = _Table(raw, t.where("levels"), t.file)
        first, last, step = r.number("first"), r.number("last"), r.number("step")
        r.finish()
        if not 0 < first <= last:
            raise r.error(None, "need 0 < first <= last")
        if not step > 0:
            raise r.error("step", "must be positive")
        count = math.floor((last - first) / step * (1 + 1e-12) + 1e-9) + 1
        if count > MAX_LEVELS:
            raise r.error("step", f"gives {count} levels; at most {MAX_LEVELS}")
        values = [first + i * step for i in range(count)]
    elif isinstance(raw, list):
        if not raw:
            raise t.error("levels", "needs at least one level")
        values = []
        for i, x in enumerate(raw):
            if isinstance(x, bool) or not isinstance(x, int | float) or not math.isfinite(x):
                raise t.error(f"levels[{i}]", f"expected a number, got {x!r}")
            values.append(float(x))
        if len(values) > MAX_LEVELS:
            raise t.error("levels", f"at most {MAX_LEVELS} levels")
    else:
        raise t.error("levels", "expected a list of numbers or {first, last, step}")
    arr = np.asarray(values)
    if not (arr[0] > 0 and np.all(np.diff(arr) > 0)):
        raise t.error("levels", "must be positive and strictly increasing")
    return tuple(float(x) * unit_si for x in arr)


def _ida(t: _Table, t1: float) -> IdaSpec:
    measure = t.string("measure", choices=MEASURES)
    unit = t.string("unit")
    unit_si = parse_unit(unit, "acceleration", t.where("unit"), t.file)
    levels = _levels(t, unit_si)
    if measure == "psa":
        period = t.quantity("period", "time", None)
        if period is not None and not period > 0:
            raise t.error("period", "must be positive")
        damping = t.ratio("damping", 0.05, hi=0.999)
    else:
        for key in ("period", "damping"):
            if t.has(key):
                raise t.error(key, 'only for measure = "psa"')
        period, damping = None, 0.05
    limit, basis = t.limit_with_basis("collapse_drift_ratio", "the collapse drift ratio")
    t.finish()
    return IdaSpec(
        measure,
        unit,
        unit_si,
        levels,
        t1 if period is None else period,
        damping,
        limit,
        basis,
    )


def _damage_states(top: _Table) -> tuple[DamageState, ...]:
    out: list[DamageState] = []
    for i, item in enumerate(top.list("damage_states", [])):
        d = _Table(item, f"damage_states[{i}]", top.file)
        name = d.string("name")
        ratio = d.quantity("drift_ratio", "dimensionless")
        if not 0 < ratio < 1:
            raise d.error("drift_ratio", f"must lie in (0, 1), got {ratio:g}")
        basis = d.string("basis")
        if not basis.strip():
            raise d.error("basis", "state the basis of the damage-state drift ratio")
        d.finish()
        if any(s.name == name for s in out):
            raise d.error("name", f"damage state {name!r} is listed twice")
        out.append(DamageState(name, ratio, basis))
    return tuple(sorted(out, key=lambda s: s.drift_ratio))


def describe_levels(study: Study) -> list[str]:
    """The intensity levels in the user's unit, as text (empty for a suite)."""
    if study.ida is None:
        return []
    return [f"{x / study.ida.unit_si:.4g} {study.ida.unit}" for x in study.ida.levels]


def level_in_unit(study: Study, level: float | None) -> float | None:
    """An intensity level (m/s²) in the study's unit (None stays None)."""
    if level is None or study.ida is None:
        return level
    return level / study.ida.unit_si


__all__ = [
    "DamageState",
    "IdaSpec",
    "Study",
    "StudyRecord",
    "load_study",
]
