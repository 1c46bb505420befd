"""A modelled survey in map view: a grid of crossing 2-D lines and small 3-D volumes over one earth,
with CDP X/Y in their headers, their pick files, and planted line statics and mis-picks.

The earth is given in map coordinates (metres east and north of the grid origin): a gently
dipping seafloor and three rock units whose tops are planes with a low dome. Every line or
inline is modelled with :func:`pitfalls.modelling.section.model_section` from the depths under
its traces, so where two lines cross they see the same earth and their true picks tie exactly.

Planted mistakes, for tests and the benchmark:

- a **line static** (``static_ms``): the whole line, data and every pick, is later by a whole
  number of samples, as a line-to-line static moves it; the seafloor shows the same shift, so
  nothing is mis-tied;
- a **mis-pick** (``pick_shift_ms``): one horizon's picks on one line are moved (by one dominant
  period, the next loop of the same event), the data are not: a mis-tie at every crossing
  of that line;
- a **pick on the multiple** (``pick_on_multiple``): one horizon's picks on one line follow the
  first seafloor multiple, at twice the seafloor time.

With the defaults the seafloor lies near 600 ms and H1, H2 and H3 near 720, 890 and 1080 ms,
all above the first seafloor multiple (near 1200 ms) and the peg-legs.

The scenario (the Quorvelle Trough grid, lines QV26-...) is invented.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np
import yaml

from pitfalls.io.output import write_whole
from pitfalls.model import Section
from pitfalls.modelling.earth import EarthModel, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.segy_writer import write_picks_csv, write_section_segy, write_volume_segy

WATER_M_S = 1500.0
HORIZONS = ("H1", "H2", "H3")
"""The three unit tops, shallow to deep, as the pick files name them."""
UNIT_VELOCITIES_M_S = (1750.0, 2150.0, 2600.0)
SEDIMENT_M_S = 1650.0


@dataclass(frozen=True)
class MapEarth:
    """Depths as planes plus a dome, metres below sea level, at map position (x, y) in metres."""

    seafloor_m: float = 450.0
    seafloor_dip_m_per_km: tuple[float, float] = (12.0, 6.0)
    tops_m: tuple[float, ...] = (550.0, 700.0, 900.0)
    top_dip_m_per_km: tuple[float, float] = (20.0, -10.0)
    dome_m: float = 40.0
    dome_centre_m: tuple[float, float] = (600.0, 600.0)
    dome_radius_m: float = 500.0

    def seafloor_depth(self, x_m: np.ndarray, y_m: np.ndarray) -> np.ndarray:
        return self.seafloor_m + (self.seafloor_dip_m_per_km[0] * x_m + self.seafloor_dip_m_per_km[1] * y_m) / 1000.0

    def top_depth(self, unit: int, x_m: np.ndarray, y_m: np.ndarray) -> np.ndarray:
        plane = self.tops_m[unit] + (self.top_dip_m_per_km[0] * x_m + self.top_dip_m_per_km[1] * y_m) / 1000.0
        r2 = (x_m - self.dome_centre_m[0]) ** 2 + (y_m - self.dome_centre_m[1]) ** 2
        return plane - self.dome_m * np.exp(-r2 / (2.0 * self.dome_radius_m ** 2))

    def along(self, x_m: np.ndarray, y_m: np.ndarray, spacing_m: float) -> EarthModel:
        """The 1-D-per-trace earth under traces at (x, y)."""
        seafloor = self.seafloor_depth(x_m, y_m)
        units = [Unit("sediment", seafloor, SEDIMENT_M_S)]
        units += [Unit(name, self.top_depth(index, x_m, y_m), velocity)
                  for index, (name, velocity) in enumerate(zip(HORIZONS, UNIT_VELOCITIES_M_S))]
        return EarthModel(WATER_M_S, seafloor, tuple(units), trace_spacing_m=spacing_m)


@dataclass(frozen=True)
class GridLine:
    """A straight 2-D line: first trace at (origin) in grid metres, traces every ``spacing_m`` along ``azimuth_deg``."""

    name: str
    origin_m: tuple[float, float]
    azimuth_deg: float
    n_traces: int
    spacing_m: float

    def xy_m(self) -> np.ndarray:
        along = self.spacing_m * np.arange(self.n_traces)
        azimuth = np.deg2rad(self.azimuth_deg)
        return np.stack([self.origin_m[0] + along * np.sin(azimuth), self.origin_m[1] + along * np.cos(azimuth)], axis=1)


@dataclass(frozen=True)
class GridVolume:
    """A small 3-D survey: inlines run north from ``origin_m`` every ``spacing_m``, crosslines east."""

    name: str
    origin_m: tuple[float, float]
    n_inlines: int
    n_xlines: int
    spacing_m: float
    first_inline: int = 100
    first_xline: int = 300


@dataclass(frozen=True)
class ModelledGrid:
    """What was written: the section and pick file of each line and volume, and the project file."""

    sections: dict[str, str] = field(default_factory=dict)
    picks: dict[str, str] = field(default_factory=dict)
    project: str = ""
    period_ms: float = 0.0


def grid_lines(n_east_west: int, n_north_south: int, n_traces: int, spacing_m: float,
               prefix: str = "QV26") -> list[GridLine]:
    """Lines east-west and north-south, evenly spread so that every pair of an east-west and a
    north-south line crosses on a trace of each, well inside both."""
    def positions(count: int) -> list[float]:
        step_traces = (n_traces - 1) // (count + 1)
        return [spacing_m * step_traces * (k + 1) for k in range(count)]

    lines = [GridLine(f"{prefix}-{101 + k}", (0.0, y), 90.0, n_traces, spacing_m)
             for k, y in enumerate(positions(n_east_west))]
    lines += [GridLine(f"{prefix}-{201 + k}", (x, 0.0), 0.0, n_traces, spacing_m)
              for k, x in enumerate(positions(n_north_south))]
    return lines


def _shift(data: np.ndarray, samples: int) -> np.ndarray:
    """Move every trace later by a whole number of samples, zero-filled."""
    if samples == 0:
        return data
    out = np.zeros_like(data)
    if samples > 0:
        out[:, samples:] = data[:, :-samples]
    else:
        out[:, :samples] = data[:, -samples:]
    return out


def write_grid(folder: str, lines: Sequence[GridLine], volumes: Sequence[GridVolume] = (), *,
               earth: MapEarth = MapEarth(), dt_ms: float = 4.0, n_samples: int = 330, frequency_hz: float = 25.0,
               snr: float | None = 30.0, static_ms: Mapping[str, float] | None = None,
               pick_shift_ms: Mapping[tuple[str, str], float] | None = None,
               pick_on_multiple: Sequence[tuple[str, str]] = (), origin_x_m: float = 420000.0,
               origin_y_m: float = 7150000.0, seed: int = 7) -> ModelledGrid:
    """Model and write every line and volume with its pick file, and a project file ``project.yaml``.

    Parameters
    ----------
    folder : str
        Created if absent; files are ``NAME.sgy`` and ``NAME_picks.csv``.
    lines, volumes
        The geometry (see :func:`grid_lines`).
    static_ms : mapping, optional
        Line name -> static in ms (a whole number of samples): data and picks later by it.
    pick_shift_ms : mapping, optional
        (line name, horizon) -> ms added to that horizon's picks on that line only.
    pick_on_multiple : sequence of (line name, horizon)
        That horizon's picks on that line are put on the first seafloor multiple (2 t_sf).
    origin_x_m, origin_y_m : float
        Map coordinates of the grid origin written to CDP X/Y.
    seed : int
        Noise seed of the first section; each section adds its position.

    Returns
    -------
    ModelledGrid
    """
    static_ms = dict(static_ms or {})
    pick_shift_ms = dict(pick_shift_ms or {})
    os.makedirs(folder, exist_ok=True)
    written = ModelledGrid(period_ms=1000.0 / frequency_hz)
    for position, line in enumerate(lines):
        xy = line.xy_m()
        modelled = model_section(earth.along(xy[:, 0], xy[:, 1], line.spacing_m), dt_ms=dt_ms, n_samples=n_samples,
                                 frequency_hz=frequency_hz, snr=snr, seed=seed + position, name=line.name)
        static = float(static_ms.get(line.name, 0.0))
        samples = int(round(static / dt_ms))
        if abs(samples * dt_ms - static) > 1e-9:
            raise ValueError(f"the static of {line.name} must be a whole number of {dt_ms:g} ms samples")
        section = Section(data=_shift(modelled.section.data, samples), dt_ms=dt_ms, t0_ms=0.0,
                          trace_spacing_m=line.spacing_m, trace_numbers=np.arange(1, line.n_traces + 1), name=line.name)
        segy = os.path.join(folder, f"{line.name}.sgy")
        write_section_segy(segy, section, inline_number=1000 + position, origin_x_m=origin_x_m + line.origin_m[0],
                           origin_y_m=origin_y_m + line.origin_m[1], azimuth_deg=line.azimuth_deg,
                           text_lines=[f"MODELLED LINE {line.name}, INVENTED QUORVELLE TROUGH GRID"])
        rows = []
        for horizon in HORIZONS:
            times = modelled.surface_twt_ms[horizon] + static + pick_shift_ms.get((line.name, horizon), 0.0)
            if (line.name, horizon) in pick_on_multiple:
                times = 2.0 * modelled.seafloor_twt_ms + static  # first seafloor multiple at 2 t_sf
            rows += [{"horizon": horizon, "trace": trace + 1, "twt_ms": float(times[trace]), "kind": "horizon"}
                     for trace in range(line.n_traces)]
        picks = os.path.join(folder, f"{line.name}_picks.csv")
        write_picks_csv(picks, rows)
        written.sections[line.name] = segy
        written.picks[line.name] = picks
    for position, volume in enumerate(volumes):
        x_m = volume.origin_m[0] + volume.spacing_m * np.arange(volume.n_xlines)
        panels, rows = [], []
        for inline in range(volume.n_inlines):
            y_m = np.full(volume.n_xlines, volume.origin_m[1] + volume.spacing_m * inline)
            modelled = model_section(earth.along(x_m, y_m, volume.spacing_m), dt_ms=dt_ms, n_samples=n_samples,
                                     frequency_hz=frequency_hz, snr=snr, seed=seed + 1000 * (position + 1) + inline,
                                     name=f"{volume.name} inline {volume.first_inline + inline}")
            panels.append(modelled.section)
            for horizon in HORIZONS:
                rows += [{"horizon": horizon, "inline": volume.first_inline + inline,
                          "xline": volume.first_xline + xline, "twt_ms": float(modelled.surface_twt_ms[horizon][xline]),
                          "kind": "horizon"} for xline in range(volume.n_xlines)]
        segy = os.path.join(folder, f"{volume.name}.sgy")
        write_volume_segy(segy, panels, [volume.first_inline + k for k in range(volume.n_inlines)],
                          [volume.first_xline + k for k in range(volume.n_xlines)],
                          origin_x_m=origin_x_m + volume.origin_m[0], origin_y_m=origin_y_m + volume.origin_m[1],
                          text_lines=[f"MODELLED SURVEY {volume.name}, INVENTED QUORVELLE TROUGH GRID"])
        picks = os.path.join(folder, f"{volume.name}_picks.csv")
        write_picks_csv(picks, rows)
        written.sections[volume.name] = segy
        written.picks[volume.name] = picks
    project = os.path.join(folder, "project.yaml")
    write_project_file(project, [(os.path.basename(written.sections[name]), [os.path.basename(written.picks[name])])
                                 for name in written.sections])
    return ModelledGrid(sections=written.sections, picks=written.picks, project=project, period_ms=written.period_ms)


def write_project_file(path: str, sections: Sequence[tuple[str, Sequence[str]]], rules: str | None = None) -> str:
    """Write a project file listing ``(section, [pick files])`` entries, paths as given."""
    document: dict = {}
    if rules:
        document["rules"] = rules
    document["sections"] = [{"section": section, "picks": list(picks)} for section, picks in sections]
    text = yaml.safe_dump(document, sort_keys=False, default_flow_style=False)
    write_whole(path, lambda temporary: temporary.write_text(text, encoding="utf-8"))
    return path
