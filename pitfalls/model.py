"""Frozen data records shared by the readers, the detectors and the reports.

Arrays are ``(n_traces, n_samples)``, time last, as segyio returns them.
Trace numbers are 1-based labels (``trace_number``); positions into arrays are
0-based (``trace_index``).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

SEVERITIES = ("high", "medium", "low")
PICK_KINDS = ("horizon", "contact", "seafloor")


@dataclass(frozen=True)
class SectionInfo:
    """What the report says about the SEG-Y file as a whole."""

    path: str
    """The file as given on the command line."""
    sha256: str
    """SHA-256 of the file's bytes, so a report can be tied to its input."""
    geometry: str
    """``"2d"`` for a line (including a one-inline or one-crossline volume), ``"3d"`` for a volume."""
    n_traces: int
    """Traces in the file."""
    n_samples: int
    """Samples per trace."""
    dt_ms: float
    """Sample interval in milliseconds."""
    t0_ms: float
    """Two-way time of the first sample, from the delay recording time."""
    n_inlines: int = 1
    """Inlines in a 3-D volume (1 for a line)."""
    n_xlines: int = 1
    """Crosslines in a 3-D volume (``n_traces`` for a line)."""
    n_missing_traces: int = 0
    """Grid positions of a 3-D volume with no trace in the file (treated as no data)."""
    trace_spacing_m: float = 0.0
    """Median distance between neighbouring traces, from CDP X/Y, or the rules' fallback."""
    spacing_from_headers: bool = False
    """True when the spacing was measured from coordinates, False when the fallback was used."""
    notes: tuple[str, ...] = ()
    """Things about the file the interpreter should know (e.g. header disagreements)."""
    coordinate_extent_xy: tuple[tuple[float, float], tuple[float, float]] | None = None
    """``((x_min, y_min), (x_max, y_max))`` of the traces' CDP X/Y, scalar applied; None when the headers hold none."""


@dataclass(frozen=True)
class Section:
    """One 2-D panel of post-stack traces: a 2-D line, or one inline of a volume.

    Detectors see only panels; the engine walks a volume inline by inline and
    merges the findings into inline/crossline ranges.
    """

    data: np.ndarray
    """Amplitudes, ndarray of shape (n_traces, n_samples), float32. NaN where no trace exists."""
    dt_ms: float
    """Sample interval in milliseconds."""
    t0_ms: float
    """Two-way time of the first sample in milliseconds."""
    trace_spacing_m: float
    """Distance between neighbouring traces in metres."""
    trace_numbers: np.ndarray
    """1-based label of each trace as pick files name it: file order for a line, crossline number for an inline."""
    inline_number: int | None = None
    """The inline this panel is, for a 3-D volume; None for a 2-D line."""
    name: str = ""
    """A label for messages, e.g. the file name or ``inline 1204``."""

    @property
    def n_traces(self) -> int:
        return int(self.data.shape[0])

    @property
    def n_samples(self) -> int:
        return int(self.data.shape[1])

    @property
    def twt_ms(self) -> np.ndarray:
        """Two-way time of every sample, shape (n_samples,)."""
        return self.t0_ms + self.dt_ms * np.arange(self.n_samples)

    def sample_of(self, twt_ms: np.ndarray | float) -> np.ndarray | float:
        """Fractional sample index of a two-way time."""
        return (np.asarray(twt_ms) - self.t0_ms) / self.dt_ms


@dataclass(frozen=True)
class Block:
    """Consecutive panels read together: a 2-D line (one panel), or a run of inlines of a volume.

    The engine reads a section block by block, builds one context per panel and runs the
    detectors on each panel; blocks are the unit of work handed to worker processes.
    """

    first_panel: int
    """Index of the block's first panel in the section (0 for a line, the inline index in a volume)."""
    panels: tuple[Section, ...]
    """The panels, in section order; their data may be views into one (n_panels, n_traces, n_samples) array."""

    @property
    def n_panels(self) -> int:
        return len(self.panels)


@dataclass(frozen=True)
class Horizon:
    """One picked surface: on one panel, aligned trace by trace with it; or, in a volume's map view,
    gridded on the inline/crossline grid."""

    name: str
    """The horizon name from the pick file."""
    kind: str
    """``horizon``, ``contact`` or ``seafloor``."""
    twt_ms: np.ndarray
    """Picked two-way time per panel trace, shape (n_traces,), or per grid position in map view,
    shape (n_inlines, n_xlines); NaN is a gap or no pick."""

    @property
    def n_points(self) -> int:
        return int(np.count_nonzero(np.isfinite(self.twt_ms)))


@dataclass(frozen=True)
class Picks:
    """Every horizon picked on one panel, in the order they first appear in the pick files."""

    horizons: tuple[Horizon, ...] = ()

    def of_kind(self, kind: str) -> tuple[Horizon, ...]:
        return tuple(h for h in self.horizons if h.kind == kind)

    def by_name(self, name: str) -> Horizon:
        for horizon in self.horizons:
            if horizon.name == name:
                return horizon
        raise KeyError(name)


@dataclass(frozen=True)
class Finding:
    """One warning: what was found, where, how sure, the numbers behind it and what to check."""

    id: str
    """``family.kind``, e.g. ``multiple.seafloor``; its meaning never changes."""
    detector: str
    """Name of the detector that made it."""
    severity: str
    """``high``, ``medium`` or ``low``."""
    confidence: float
    """How sure the detector is, in [0, 1]."""
    title: str
    """One sentence filled in from a template and the evidence."""
    advice: str
    """What an interpreter should check next."""
    horizon: str | None = None
    """The pick the finding is about, or None for a finding from the section alone."""
    traces: tuple[int, int] | None = None
    """Inclusive 1-based trace range on a 2-D line (panel trace numbers from a detector)."""
    twt_ms: tuple[float, float] | None = None
    """Inclusive two-way time window in ms."""
    inlines: tuple[int, int] | None = None
    """Inclusive inline range on a 3-D volume."""
    xlines: tuple[int, int] | None = None
    """Inclusive crossline range on a 3-D volume (crossline numbers from the trace headers)."""
    footprint_xy: tuple[tuple[float, float], tuple[float, float]] | None = None
    """``((x_min, y_min), (x_max, y_max))`` in CDP X/Y of the traces the finding covers; set by the engine."""
    evidence: Mapping[str, Any] = field(default_factory=dict)
    """Measured numbers, unit in the key name, plain unrounded float/int/str/bool."""
    score: float = 0.0
    """Ranking score in [0, 1], set by ``report.rank`` after all detectors run."""
    rank: int = 0
    """1 = look at this first; set by ``report.rank``."""
    detectors: tuple[str, ...] = ()
    """Every detector whose evidence the finding carries, when ``report.rank`` joined one event's findings."""
    fingerprint: str = ""
    """Short name of the finding, stable between runs and across small pick edits; set by ``report.rank``."""
    accepted: Mapping[str, Any] | None = None
    """``{"reason", "by", "date"}`` when a reviewer accepted the finding (``--accepted``), else None."""


@dataclass(frozen=True)
class DetectorRun:
    """How one detector fared on the scan."""

    name: str
    status: str
    """``ran``, ``failed`` or ``skipped``."""
    seconds: float
    message: str = ""
    """For a failed detector: the error, in one line."""
