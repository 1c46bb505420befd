"""pitfalls: screens seismic interpretation picks for physics-based pitfalls.

The Python interface, for notebooks and pipelines. The command line is a thin layer over it:
both give the same report for the same inputs.

>>> import pitfalls
>>> report = pitfalls.scan("demo_data/OT25-117.sgy", picks="demo_data/OT25-117_picks.csv")  # doctest: +SKIP
>>> report.passes(gate="high")  # doctest: +SKIP
False

``import pitfalls`` is light: numpy, scipy and the detectors are imported by the first call
that needs them. Every mistake in the input raises :class:`PitfallsInputError` with one line
naming the input, the row, trace or key, and what to fix.

pitfalls screens picks for known physical pitfalls. It does not replace review of the
interpretation by qualified interpreters, nor local regulations and licensed professional
practice.
"""
from __future__ import annotations

import os
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any, Callable, Iterator, Sequence

from pitfalls.errors import PitfallsInputError

if TYPE_CHECKING:  # pragma: no cover - names for the annotations only
    from pitfalls.engine import PickSummary, ScanResult, SeafloorSummary
    from pitfalls.model import DetectorRun, Finding, SectionInfo

__version__ = "0.1.0"

__all__ = [
    "__version__",
    "scan",
    "load_rules",
    "explain",
    "finding_ids",
    "Report",
    "Rules",
    "Finding",
    "PitfallsInputError",
    "GATES",
    "default_jobs",
]

GATES = ("high", "medium", "low", "off")
"""Values of ``gate`` in :meth:`Report.passes`: the least severe finding that fails the gate; ``off`` never fails."""

_SEVERITY_ORDER = {"high": 0, "medium": 1, "low": 2}


def __getattr__(name: str) -> Any:
    """``Finding`` is imported on first use, so ``import pitfalls`` does not load numpy."""
    if name == "Finding":
        from pitfalls.model import Finding
        return Finding
    raise AttributeError(f"module 'pitfalls' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


# --- rules --------------------------------------------------------------------------------
class Rules(Mapping):
    """The active rules: the defaults merged with any overrides, every value checked. Read-only.

    Index it like the rules file (``rules["velocity"]["water_velocity_m_s"]``). To change a
    value, pass overrides to :func:`load_rules` or :func:`scan`, or edit :meth:`to_dict` and
    pass that.

    Attributes
    ----------
    path : str
        The rules file, the label of a mapping of overrides, or the defaults file.
    sha256 : str
        SHA-256 of that file's bytes (of the overrides written as YAML, for a mapping).
    """

    def __init__(self, values: Mapping[str, Mapping[str, Any]], path: str, sha256: str) -> None:
        from types import MappingProxyType
        self._values = {section: MappingProxyType(dict(keys)) for section, keys in values.items()}
        self.path = path
        self.sha256 = sha256

    def __getitem__(self, section: str) -> Mapping[str, Any]:
        return self._values[section]

    def __iter__(self) -> Iterator[str]:
        return iter(self._values)

    def __len__(self) -> int:
        return len(self._values)

    def to_dict(self) -> dict[str, dict[str, Any]]:
        """A fresh nested dict of every section and key, free to edit."""
        return {section: dict(keys) for section, keys in self._values.items()}

    def to_yaml(self) -> str:
        """The rules as YAML text, as ``pitfalls rules`` prints them."""
        from pitfalls.io.rules import render_rules
        return render_rules(self.to_dict())

    def __repr__(self) -> str:
        return f"<pitfalls.Rules from {self.path}: {', '.join(self._values)}>"


def load_rules(rules: str | os.PathLike | Mapping[str, Any] | None = None) -> Rules:
    """The active rules: the defaults merged with overrides, every key and value checked.

    Parameters
    ----------
    rules : str, path-like, mapping or None
        A YAML rules file; or a mapping of overrides, either nested
        (``{"velocity": {"water_velocity_m_s": 1480.0}}``) or with dotted keys
        (``{"velocity.water_velocity_m_s": 1480.0}``); or None for the defaults alone.
        A :class:`Rules` is returned as it is.

    Returns
    -------
    Rules
        Read-only; ``path`` and ``sha256`` say where the values came from.

    Raises
    ------
    PitfallsInputError
        For an unreadable file, an unknown section or key, a wrong type or a value out of
        range, naming the file (or ``rules mapping``) and the dotted key.

    Examples
    --------
    >>> import pitfalls
    >>> pitfalls.load_rules({"velocity.water_velocity_m_s": 1480.0})["velocity"]["water_velocity_m_s"]
    1480.0
    """
    if isinstance(rules, Rules):
        return rules
    from pitfalls import detectors as registry
    from pitfalls.io import rules as rules_io
    if rules is None or isinstance(rules, (str, os.PathLike)):
        values, path, sha256 = rules_io.load_rules(None if rules is None else os.fspath(rules), registry.rule_keys())
    else:
        values, path, sha256 = rules_io.load_rules_mapping(rules, registry.rule_keys())
    return Rules(values, path, sha256)


# --- explain --------------------------------------------------------------------------------
def finding_ids() -> tuple[str, ...]:
    """Every finding id the detectors can report, sorted.

    Returns
    -------
    tuple of str
        Ids of the form ``family.kind``, e.g. ``multiple.seafloor``.
    """
    from pitfalls import detectors as registry
    return tuple(registry.finding_kinds())


def explain(finding_id: str) -> str:
    """What a finding means, why it matters and what to check, as ``pitfalls explain ID`` prints it.

    Parameters
    ----------
    finding_id : str
        An id from a report (``family.kind``); :func:`finding_ids` lists them.

    Returns
    -------
    str
        The id and its detector on the first line, then three paragraphs.

    Raises
    ------
    PitfallsInputError
        For an id no detector reports.
    """
    from pitfalls import detectors as registry
    kinds = registry.finding_kinds()
    if finding_id not in kinds:
        raise PitfallsInputError("explain", "", f"unknown finding id {finding_id!r}",
                                 "run `pitfalls explain --list` (or pitfalls.finding_ids()) for the ids")
    detector, (meaning, why, check) = kinds[finding_id]
    return (f"{finding_id} (detector {detector})\n\nWhat it means: {meaning}\n\n"
            f"Why it matters: {why}\n\nWhat to check: {check}")


# --- the report ----------------------------------------------------------------------------
class Report:
    """The result of :func:`scan`: the ranked findings and every report made from them.

    Not built directly; :func:`scan` returns one. Reports are plain values: nothing in them
    changes after the scan.

    Attributes
    ----------
    findings : tuple of Finding
        Ranked, best first (``rank`` 1 = look at this first); frozen records with the fields
        of the JSON report's findings.
    section : SectionInfo
        The section as the report describes it (path or name, checksum, geometry, sampling).
    picks : tuple
        One summary per horizon: ``horizon``, ``kind``, ``n_points``, ``n_gaps``.
    detectors : tuple of DetectorRun
        Each detector's ``name``, ``status`` (``ran``, ``failed``, ``skipped``) and ``seconds``.
    rules : Rules
        The rules the scan used.
    """

    def __init__(self, result: "ScanResult", rules: Rules, source: Any = None,
                 file_options: Mapping[str, Any] | None = None) -> None:
        from types import MappingProxyType
        from dataclasses import replace
        self._result = result
        self._source = source
        self._file_options = dict(file_options or {})
        self.rules = rules
        self.findings: tuple[Finding, ...] = tuple(
            replace(f, evidence=MappingProxyType(dict(f.evidence))) for f in result.findings)
        self.section: SectionInfo = result.section
        self.picks: tuple[PickSummary, ...] = result.picks
        self.detectors: tuple[DetectorRun, ...] = result.detectors

    @property
    def scan_result(self) -> "ScanResult":
        """The engine's complete result, as the report writers in ``pitfalls.report`` read it."""
        return self._result

    @property
    def seafloor(self) -> "SeafloorSummary":
        """The seafloor every check was measured against: source, polarity, median time, dominant frequency."""
        return self._result.seafloor

    @property
    def failed(self) -> tuple["DetectorRun", ...]:
        """The detectors that failed; a scan with any is incomplete and passes no gate."""
        return self._result.failed

    @property
    def summary(self) -> dict[str, int]:
        """Number of findings per severity: ``{"high": n, "medium": n, "low": n}``."""
        return {severity: sum(1 for f in self.findings if f.severity == severity) for severity in _SEVERITY_ORDER}

    def passes(self, gate: str = "high") -> bool:
        """True when no finding reaches ``gate`` and every detector ran; accepted findings do not count.

        Parameters
        ----------
        gate : {"high", "medium", "low", "off"}
            The least severe finding that fails: ``"medium"`` fails on a medium or high
            finding. ``"off"`` fails only an incomplete scan. The command line's exit code
            is 1 exactly when this is False for its ``--gate``.

        Returns
        -------
        bool

        Raises
        ------
        PitfallsInputError
            For a gate not in :data:`GATES`.
        """
        if gate not in GATES:
            raise PitfallsInputError("gate", "", f"is {gate!r}", f"choose one of {', '.join(GATES)}")
        if self.failed:
            return False
        if gate == "off":
            return True
        return not any(_SEVERITY_ORDER[f.severity] <= _SEVERITY_ORDER[gate] for f in self.findings
                       if getattr(f, "accepted", None) is None)  # a reviewer's accepted finding is not gated

    def to_dict(self) -> dict[str, Any]:
        """The JSON report (schema ``pitfalls-report/1``) as plain Python values."""
        from pitfalls.report.json_report import report_dict
        return report_dict(self._result)

    def to_json(self) -> str:
        """The JSON report, schema ``pitfalls-report/1``, exactly as ``pitfalls scan --format json`` writes it."""
        import json
        return json.dumps(self.to_dict(), indent=2) + "\n"

    def to_markdown(self) -> str:
        """The report as one Markdown document, as ``pitfalls scan --format markdown`` writes it."""
        from pitfalls.report.markdown import render
        return render(self._result)

    def to_text(self, width: int = 120, detail: str = "top") -> str:
        """The terminal report as plain text (no colour), ``width`` characters wide.

        ``detail`` is ``top`` (evidence panels for medium and above) or ``all``, as ``--detail``.
        """
        import io

        from rich.console import Console

        from pitfalls.report.terminal import render
        buffer = io.StringIO()
        Console(file=buffer, width=width, color_system=None, force_terminal=False).print(render(self._result, detail))
        return buffer.getvalue()

    def accepted_template(self) -> str:
        """A starting accepted-findings file (YAML) with every finding commented out, as ``--write-accepted``."""
        from pitfalls.report.accepted import accepted_file_text
        return accepted_file_text(self._result)

    def __rich__(self) -> Any:
        """The terminal report as rich renderables, so ``rich.print(report)`` shows it in colour."""
        from pitfalls.report.terminal import render
        return render(self._result)

    def to_records(self) -> list[dict[str, Any]]:
        """One plain dict per finding, in rank order, with the JSON report's keys.

        ``pandas.DataFrame(report.to_records())`` makes a table of them; pandas is not needed
        otherwise.
        """
        from pitfalls.report.json_report import finding_dict
        return [finding_dict(f) for f in self._result.findings]

    def figure(self, colours: str | None = None) -> Any:
        """The section with the picks and the best-ranked findings drawn over it.

        Parameters
        ----------
        colours : str, optional
            A matplotlib colour map name for the amplitudes (default: grey, the seafloor
            reflection's sign dark), as ``--figure-colours``.

        Returns
        -------
        matplotlib.figure.Figure
            Not attached to pyplot, so it never changes the plotting backend.

        Raises
        ------
        PitfallsInputError
            When matplotlib is not installed (``pip install "pitfalls[figure]"``).
        """
        from pitfalls.report.figure import DEFAULT_COLOUR_MAP, make_figure, require_matplotlib
        require_matplotlib()
        colour_map = DEFAULT_COLOUR_MAP if colours is None else colours
        if self._source is not None:
            return make_figure(self._result, self.rules, self._source, colour_map)
        from pitfalls.io.segy import SeismicFile  # the file again, read as the scan read it
        with SeismicFile(self.section.path, self.rules["section"]["fallback_trace_spacing_m"],
                         **self._file_options) as seismic:
            return make_figure(self._result, self.rules, seismic, colour_map)

    def figure_png(self, colours: str | None = None) -> bytes:
        """:meth:`figure` as PNG bytes, as ``--figure FILE.png`` writes it."""
        import io
        buffer = io.BytesIO()
        self.figure(colours).savefig(buffer, format="png")
        return buffer.getvalue()

    def _repr_html_(self) -> str:
        import html

        from pitfalls.report.text import NO_FINDINGS, caution_text, location, time_window
        info = self.section
        counts = self.summary
        rows = []
        for f in self.findings:
            rows.append("<tr>" + "".join(f"<td>{html.escape(str(cell))}</td>" for cell in (
                f.rank, f.severity, f.id, f.horizon or "(section)", location(f), time_window(f),
                f"{f.confidence:.2f}", f.title)) + "</tr>")
        failed = "".join(f"<p><strong>Detector failed: {html.escape(run.name)}</strong>: {html.escape(run.message)}. "
                         "This scan is incomplete.</p>" for run in self.failed)
        table = ("<table><thead><tr>" + "".join(f"<th>{name}</th>" for name in (
            "#", "severity", "id", "horizon", "where", "twt", "confidence", "what")) + "</tr></thead><tbody>"
                 + "".join(rows) + "</tbody></table>") if rows else f"<p>{html.escape(NO_FINDINGS)}</p>"
        return (f"<div><p><strong>pitfalls scan</strong> of {html.escape(info.path)} "
                f"({info.geometry.upper()}, {info.n_traces} traces): {counts['high']} high, {counts['medium']} medium, "
                f"{counts['low']} low</p>{failed}{table}<p><em>{html.escape(caution_text(self._result))}</em></p></div>")

    def __repr__(self) -> str:
        counts = self.summary
        state = " (incomplete: a detector failed)" if self.failed else ""
        return (f"<pitfalls.Report {self.section.path}: {len(self.findings)} findings, {counts['high']} high, "
                f"{counts['medium']} medium, {counts['low']} low{state}>")


# --- the scan -----------------------------------------------------------------------------
def _only(only: str | Sequence[str] | None) -> list[str] | None:
    if only is None:
        return None
    names = only.split(",") if isinstance(only, str) else list(only)
    if not all(isinstance(name, str) for name in names):
        raise PitfallsInputError("only", "", "must be detector names", "give names such as ['multiples', 'contacts']")
    cleaned = [name.strip() for name in names if name.strip()]
    return cleaned or None


def _pick_inputs(picks: Any) -> list:
    """Pick files and tables as the engine takes them: paths, or already-read tables."""
    from pitfalls.io.pick_table import TABLE_LABEL, is_table, read_pick_table
    if picks is None:
        return []
    if isinstance(picks, (str, os.PathLike)) or is_table(picks):
        items = [picks]
    elif isinstance(picks, Sequence):
        items = list(picks)
    else:
        raise PitfallsInputError("picks", "", f"is a {type(picks).__name__}",
                                 "give a pick file path, a list of them, or a table of columns "
                                 "(horizon, trace or inline and xline, twt_ms, kind)")
    tables = sum(1 for item in items if not isinstance(item, (str, os.PathLike)))
    inputs: list = []
    for number, item in enumerate(items, start=1):
        if isinstance(item, (str, os.PathLike)):
            inputs.append(os.fspath(item))
        elif is_table(item):
            label = TABLE_LABEL if tables == 1 else f"picks table {number} (rows counted from 0)"
            inputs.append(read_pick_table(item, label))
        else:
            raise PitfallsInputError("picks", f"item {number}", f"is a {type(item).__name__}",
                                     "give each item as a pick file path or a table of columns")
    return inputs


def _read_picks(inputs: list, columns: str | Sequence[str] | None, horizon: str | None) -> list:
    """Pick files read (with the column and horizon options) and tables already read, in the order given."""
    from pitfalls import engine
    from pitfalls.io.picks import PickFile, parse_columns
    if columns is not None:
        columns = parse_columns(columns if isinstance(columns, str) else ",".join(map(str, columns)))
    paths = [item for item in inputs if not isinstance(item, PickFile)]
    if horizon is not None and not paths:
        raise PitfallsInputError("horizon", "", "names the horizon of pick files without a horizon column, "
                                 "but no pick file is given", "give the horizon as a column of the table")
    files = iter(engine.read_pick_files(paths, columns, horizon))
    return [item if isinstance(item, PickFile) else next(files) for item in inputs]


def _array_source(section: Any, rules: Rules, geometry: dict[str, Any]) -> Any:
    from pitfalls.io.array import ArraySource, dataarray_geometry, is_dataarray
    fallback_m = rules["section"]["fallback_trace_spacing_m"]
    if is_dataarray(section):
        arguments = dataarray_geometry(section, geometry.pop("name"))
        for key, value in geometry.items():  # explicit keywords win over what the DataArray says
            if value is not None:
                arguments[key] = value
        return ArraySource(fallback_spacing_m=fallback_m, **arguments)
    name = geometry.pop("name")
    if geometry.get("t0_ms") is None:
        geometry["t0_ms"] = 0.0
    if name is not None:
        geometry["name"] = name
    return ArraySource(section, fallback_spacing_m=fallback_m, **geometry)


def scan(section: Any, picks: Any = None, rules: str | os.PathLike | Mapping[str, Any] | None = None,
         only: str | Sequence[str] | None = None, jobs: int | None = None, *, dt_ms: float | None = None,
         t0_ms: float | None = None, trace_numbers: Sequence[int] | None = None,
         inline_numbers: Sequence[int] | None = None, xline_numbers: Sequence[int] | None = None,
         coordinates: Any = None, trace_spacing_m: float | None = None, name: str | None = None,
         iline_byte: int | None = None, xline_byte: int | None = None, force_2d: bool = False,
         columns: str | Sequence[str] | None = None, horizon: str | None = None, velocity: Any = None,
         accepted: str | os.PathLike | None = None, progress: Callable[..., None] | None = None) -> Report:
    """Scan a section and its picks with every selected detector; return the ranked report.

    Parameters
    ----------
    section : str, path-like, numpy array or xarray.DataArray
        A post-stack SEG-Y file (2-D line or 3-D volume, read-only); or the amplitudes in
        memory, shaped (traces, samples) for a line or (inlines, crosslines, samples) for a
        volume, with ``dt_ms`` and the other geometry keywords below; or a DataArray whose
        dimensions are named (time: ``twt``, ``twt_ms``, ``time`` or ``samples``, in ms, or
        ``twt_s``; a line: ``trace`` or ``cdp``; a volume: ``inline``/``iline`` and
        ``xline``/``crossline``), with coordinates giving the times and line numbers.
        NaN marks traces with no data. The array is never changed.
    picks : str, path-like, table, or list of them, optional
        Pick files (CSV, the pick-file format), or tables of columns with the same names:
        a dict of lists or arrays, a pandas DataFrame or a numpy structured array with
        ``horizon``, ``trace`` (line) or ``inline`` and ``xline`` (volume), ``twt_ms`` (or
        ``twt_s``) and optionally ``kind`` (``horizon``, ``contact``, ``seafloor``). NaN or
        None times are gaps. Messages count a table's rows from 0.
    rules : str, path-like, mapping, Rules or None
        As for :func:`load_rules`; None uses the defaults.
    only : str or sequence of str, optional
        Run only these detectors (``"multiples,contacts"`` or a list); all when None.
    jobs : int, optional
        Worker processes for the blocks of a volume; the report is the same for any number.
        None: one per available core for a file, 1 for an array (each worker process would
        need its own copy of the array).
    dt_ms, t0_ms : float
        For an array: the sample interval (required) and the time of the first sample
        (default 0), in ms.
    trace_numbers : sequence of int, optional
        For a line array: each trace's number as the picks name it (default 1..n).
    inline_numbers, xline_numbers : sequence of int, optional
        For a volume array: the inline and crossline numbers (default 1..n each).
    coordinates : (x, y), optional
        For an array: each trace's X and Y in metres, shaped like the array without its
        time axis; used for the trace spacing.
    trace_spacing_m : float, optional
        For an array: the trace spacing, instead of measuring it from ``coordinates``.
    name : str, optional
        For an array: how the report names it (default ``(in memory)`` or the DataArray's name).
    iline_byte, xline_byte : int, optional
        For a SEG-Y volume: the trace-header bytes of the inline and crossline numbers
        (default 189 and 193).
    force_2d : bool
        For a SEG-Y file: read it as a line in trace order.
    columns : str or sequence of str, optional
        For pick files without a header row: their columns in order (``"horizon,cdp,twt_ms"``
        or a list; ``-`` skips one), as ``--columns``.
    horizon : str, optional
        The horizon name for pick files without a horizon column, as ``--horizon``.
    velocity : str, path-like or VelocityModel, optional
        The velocity function for every depth in the report: a velocity file (YAML, or a
        two-column table), as ``--velocity``, or a ``pitfalls.physics.velocity.VelocityModel``;
        the rules' function when None.
    accepted : str or path-like, optional
        An accepted-findings file (as ``--accepted``): the findings it names are shown as
        accepted and do not fail a gate.
    progress : callable, optional
        Called after every block as ``progress(panels_done, panels_total, samples_done)``.

    Returns
    -------
    Report

    Raises
    ------
    PitfallsInputError
        For any mistake in the section, the picks, the rules or the options, with one line
        naming the input, the row, trace or key, and what to fix. A detector that fails does
        not raise: the report lists it as failed and :meth:`Report.passes` is False.

    Examples
    --------
    >>> import numpy as np, pitfalls
    >>> data = np.load("line.npy")  # doctest: +SKIP
    >>> picks = {"horizon": ["H1"] * 3, "trace": [1, 2, 3], "twt_ms": [1510.0, 1512.5, 1515.0]}
    >>> report = pitfalls.scan(data, picks=picks, dt_ms=4.0)  # doctest: +SKIP
    """
    from pitfalls import engine
    active = load_rules(rules)
    entries = ()
    if accepted is not None:
        from pitfalls.io.accepted import read_accepted
        entries = read_accepted(os.fspath(accepted))
    detectors = engine.select_detectors(_only(only))
    if jobs is not None and (isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1):
        raise PitfallsInputError("jobs", "", f"is {jobs!r}", "give a whole number of worker processes, 1 or more")
    pick_inputs = _pick_inputs(picks)
    array_options = {"dt_ms": dt_ms, "t0_ms": t0_ms, "trace_numbers": trace_numbers, "inline_numbers": inline_numbers,
                     "xline_numbers": xline_numbers, "coordinates": coordinates, "trace_spacing_m": trace_spacing_m}
    file_options = {"iline_byte": iline_byte, "xline_byte": xline_byte, "force_2d": force_2d or None}
    if isinstance(section, (str, os.PathLike)):
        given = [key for key, value in {**array_options, "name": name}.items() if value is not None]
        if given:
            raise PitfallsInputError(given[0], "", "describes an array, but the section is a SEG-Y file",
                                     "leave it out: the file's headers give the geometry")
        if force_2d and (iline_byte is not None or xline_byte is not None):
            raise PitfallsInputError("force_2d", "", "cannot be combined with iline_byte/xline_byte",
                                     "use force_2d for a line, or the byte options for a 3-D volume")
        source: Any = os.fspath(section)
    elif hasattr(section, "shape") and hasattr(section, "dtype") or hasattr(section, "__array__"):
        given = [key for key, value in file_options.items() if value is not None]
        if given:
            raise PitfallsInputError(given[0], "", "is a SEG-Y header option, but the section is an array",
                                     "give the array's geometry with dt_ms, trace_numbers or inline_numbers/xline_numbers")
        source = _array_source(section, active, {**array_options, "name": name})
    else:
        raise PitfallsInputError("section", "", f"is a {type(section).__name__}",
                                 "give a SEG-Y file path, a numpy array with dt_ms, or an xarray DataArray")
    values = active.to_dict()
    pick_files = _read_picks(pick_inputs, columns, horizon)
    if velocity is not None and not isinstance(velocity, (str, os.PathLike)):
        from pitfalls.physics.velocity import VelocityModel
        if not isinstance(velocity, VelocityModel):
            raise PitfallsInputError("velocity", "", f"is a {type(velocity).__name__}",
                                     "give a velocity file path or a VelocityModel, or None for the rules' function")
    if isinstance(velocity, (str, os.PathLike)):
        from pitfalls.io.velocity import read_velocity_file
        line_name = (os.path.splitext(os.path.basename(source))[0] if isinstance(source, str)
                     else (name or getattr(section, "name", None)))
        velocity = read_velocity_file(os.fspath(velocity), values, None if line_name is None else str(line_name))
    if isinstance(source, str):
        from pitfalls.io.segy import DEFAULT_INLINE_BYTE, DEFAULT_XLINE_BYTE, SeismicFile
        iline_byte = DEFAULT_INLINE_BYTE if iline_byte is None else iline_byte  # 0 is a value: the reader refuses it
        xline_byte = DEFAULT_XLINE_BYTE if xline_byte is None else xline_byte
        with SeismicFile(source, values["section"]["fallback_trace_spacing_m"], iline_byte, xline_byte,
                         force_2d) as seismic:
            result = engine.scan_source(seismic, pick_files, values, active.path, active.sha256, detectors,
                                        progress=progress, velocity=velocity,
                                        jobs=default_jobs() if jobs is None else jobs)
        return Report(_accept(result, entries, accepted), active, file_options={"iline_byte": iline_byte,
                                                    "xline_byte": xline_byte,
                                                    "force_2d": force_2d})
    result = engine.scan_source(source, pick_files, values, active.path, active.sha256, detectors, progress=progress,
                                velocity=velocity, jobs=1 if jobs is None else jobs)
    return Report(_accept(result, entries, accepted), active, source)


def _accept(result: "ScanResult", entries: Sequence[Any], accepted: Any) -> "ScanResult":
    """The result with the reviewer's accepted findings marked, when a file was given."""
    if accepted is None:
        return result
    from pitfalls.report.accepted import apply_accepted
    return apply_accepted(result, entries)


def default_jobs() -> int:
    """Worker processes a scan of a file uses unless told: one per core this process may use.

    Returns
    -------
    int
    """
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # platforms without CPU affinity
        return max(1, os.cpu_count() or 1)
