"""A small modelled 3-D survey over a dome, for the map-view checks and their tests.

The earth is 1-D per trace (as for the lines): the inline/crossline grid is flattened into
one long list of traces, modelled by :func:`pitfalls.modelling.section.model_section`, and
folded back. What it holds, with every depth defined on the map:

- a seafloor dipping obliquely to the inlines (deepening to the north-east), so its true dip
  is seen on neither inlines nor crosslines alone;
- thin shallow beds dipping west, across the seafloor's dip, and deeper units draped over a
  dome whose crest sits in the middle of the survey, on a regional dip;
- a reservoir unit with a gas-water contact flat in depth, inside the dome's closure;
- a gas-hydrate stability base below the seafloor that deepens with the water depth, cutting
  the dipping strata.

:func:`survey_picks` then writes picks on it: correct ones (the reservoir top, the genuine
contact named with its top, a deeper horizon) and planted mistakes (a "contact" that follows
a bed, a contact deeper than the top's spill point, a horizon on the first seafloor multiple,
a horizon that slides onto the hydrate base).

Coordinates, names and numbers are invented for tests.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from pitfalls.model import Section
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import model_section
from pitfalls.physics.hydrate import stability_base_depth_m
from pitfalls.physics.velocity import VelocityModel

WATER_VELOCITY_M_S = 1500.0
SEAFLOOR_TEMPERATURE_C = 3.0
GEOTHERMAL_GRADIENT_C_PER_KM = 45.0


@dataclass(frozen=True)
class SurveyGeometry:
    """Grid and map of the modelled survey."""

    inline_numbers: np.ndarray
    xline_numbers: np.ndarray
    bin_m: float
    origin_x_m: float = 431000.0
    origin_y_m: float = 7213000.0

    @property
    def shape(self) -> tuple[int, int]:
        return len(self.inline_numbers), len(self.xline_numbers)

    def xy(self) -> tuple[np.ndarray, np.ndarray]:
        """CDP X/Y of each grid position: crosslines run east, inlines run north."""
        rows, columns = np.indices(self.shape, dtype=float)
        return self.origin_x_m + self.bin_m * columns, self.origin_y_m + self.bin_m * rows


@dataclass(frozen=True)
class ModelledSurvey:
    """The modelled volume with the true depths and times of its surfaces, all on the grid."""

    geometry: SurveyGeometry
    panels: tuple[Section, ...]
    """One panel per inline, traces = crosslines."""
    seafloor_depth_m: np.ndarray
    """(n_inlines, n_xlines)."""
    seafloor_twt_ms: np.ndarray
    surface_depth_m: dict[str, np.ndarray]
    """True depth of each unit top and overprint, (n_inlines, n_xlines), NaN where absent."""
    surface_twt_ms: dict[str, np.ndarray]
    reservoir: str
    contact: str
    contact_depth_m: float
    hydrate: str

    @property
    def volume(self) -> np.ndarray:
        return np.stack([panel.data for panel in self.panels])


def model_survey(n_inlines: int = 21, n_xlines: int = 29, bin_m: float = 25.0, *, dt_ms: float = 4.0,
                 n_samples: int = 700, frequency_hz: float = 25.0, snr: float | None = 8.0,
                 seed: int = 7) -> ModelledSurvey:
    """Model the dome survey described in the module docstring.

    Parameters
    ----------
    n_inlines, n_xlines : int
        Grid size; the dome's crest is at the middle.
    bin_m : float
        Square bin size, m.
    dt_ms, n_samples, frequency_hz, snr, seed
        As in :func:`pitfalls.modelling.section.model_section`.
    """
    geometry = SurveyGeometry(np.arange(2001, 2001 + n_inlines), np.arange(5001, 5001 + n_xlines), bin_m)
    x_m, y_m = geometry.xy()
    east_m = x_m - geometry.origin_x_m
    north_m = y_m - geometry.origin_y_m
    seafloor = 700.0 + 0.06 * east_m + 0.045 * north_m  # about 4.3 degrees towards azimuth 53
    centre_east_m = 0.5 * (n_xlines - 1) * bin_m
    centre_north_m = 0.5 * (n_inlines - 1) * bin_m
    radius2 = ((east_m - centre_east_m) ** 2 + (north_m - centre_north_m) ** 2) / (0.3 * max(n_xlines, n_inlines) * bin_m) ** 2
    dome = 1.0 - np.exp(-radius2)  # 0 at the crest, rising to 1 far from it
    regional = 0.02 * east_m

    # Interval velocities follow the project's default velocity function at each unit's top (depth
    # below the seafloor), plus an alternating contrast for reflectivity, so that the default
    # time-depth conversion is close to the truth and a flat contact stays flat in depth.
    function = VelocityModel()
    def velocity_below(top: np.ndarray, contrast_m_s: float) -> np.ndarray:
        return function.interval_velocity_m_s(np.maximum(top - seafloor, 0.0)) + contrast_m_s

    names, tops, contrasts = ["U0"], [seafloor.copy()], [0.0]
    for index in range(1, 11):  # thin shallow beds dipping west, across the seafloor's dip
        names.append(f"S{index}")
        tops.append(800.0 + 22.0 * index - 0.04 * east_m)
        contrasts.append(60.0 if index % 2 else 0.0)
    reservoir_index = len(names) + 4
    for index in range(1, 9):  # draped over the dome
        crest_m = 1060.0 + 45.0 * index
        relief_m = 20.0 + 8.0 * index
        names.append("reservoir sand" if len(names) == reservoir_index else f"U{index}")
        tops.append(crest_m + relief_m * dome + regional)
        contrasts.append(320.0 if len(names) - 1 == reservoir_index else (50.0 if index % 2 else -20.0))
    units = tuple(Unit(name, top.ravel(), velocity_below(top, contrast).ravel())
                  for name, top, contrast in zip(names, tops, contrasts))

    reservoir_top = tops[reservoir_index]
    contact_depth_m = float(np.min(reservoir_top)) + 0.45 * float(np.ptp(reservoir_top[n_inlines // 2]))
    contact = np.where(reservoir_top < contact_depth_m, contact_depth_m, np.nan)
    base_below = np.array([stability_base_depth_m(depth, SEAFLOOR_TEMPERATURE_C, GEOTHERMAL_GRADIENT_C_PER_KM)
                           for depth in seafloor.ravel()]).reshape(seafloor.shape)
    hydrate_depth = seafloor + base_below
    earth = EarthModel(
        water_velocity_m_s=WATER_VELOCITY_M_S, seafloor_depth_m=seafloor.ravel(), units=units,
        overprints=(Overprint("hydrate base", "hydrate", hydrate_depth.ravel(), 250.0, thickness_m=40.0,
                              gas_velocity_drop_m_s=350.0),
                    Overprint("gas-water contact", "gas", contact.ravel(), -450.0, units=(names[reservoir_index],))),
        trace_spacing_m=bin_m)
    modelled = model_section(earth, dt_ms=dt_ms, n_samples=n_samples, frequency_hz=frequency_hz, snr=snr,
                             seed=seed, name="modelled survey")
    shape = geometry.shape
    data = modelled.section.data.reshape(shape + (n_samples,))
    panels = tuple(Section(data=data[row], dt_ms=dt_ms, t0_ms=0.0, trace_spacing_m=bin_m,
                           trace_numbers=geometry.xline_numbers.copy(),
                           inline_number=int(geometry.inline_numbers[row]), name=f"inline {geometry.inline_numbers[row]}")
                   for row in range(shape[0]))
    surface_twt = {name: twt.reshape(shape) for name, twt in modelled.surface_twt_ms.items()}
    surface_depth = {name: top for name, top in zip(names, tops)}
    surface_depth["hydrate base"] = hydrate_depth
    surface_depth["gas-water contact"] = contact
    return ModelledSurvey(geometry, panels, seafloor, modelled.seafloor_twt_ms.reshape(shape), surface_depth,
                          surface_twt, names[reservoir_index], "gas-water contact", contact_depth_m, "hydrate base")


TOP_PICK = "Top reservoir"
CONTACT_PICK = "GWC"
FALSE_CONTACT_PICK = "Flat spot B"
DEEP_CONTACT_PICK = "Flat spot C"
MULTIPLE_PICK = "Deep marker"
SLIDE_PICK = "Shallow marker"
DEEP_PICK = "Base sand"


def survey_picks(survey: ModelledSurvey, *, contact_below_spill_m: float = 40.0) -> tuple[list[dict], dict]:
    """Picks on the modelled survey: correct ones and planted mistakes, with the truth.

    Correct: ``Top reservoir`` (the reservoir top), ``GWC`` (the flat gas-water contact; the
    rule ``contacts.reservoir_top`` should name ``GWC=Top reservoir``), ``Base sand`` (a deeper
    top). Mistakes: ``Flat spot B`` (a "contact" that follows the top of U7 over the crest),
    ``Flat spot C`` (a "contact" picked flat in depth ``contact_below_spill_m`` below the top's
    spill depth, where a contact cannot be held), ``Deep marker`` (on the first seafloor
    multiple wherever that lies inside the record), ``Shallow marker`` (follows bed S3 on the
    western half, then the hydrate base on the eastern half).

    Returns
    -------
    (rows, truth)
        ``rows`` for :func:`pitfalls.modelling.segy_writer.write_picks_csv` (horizon, inline,
        xline, twt_ms, kind); ``truth`` maps each mistake's name to what a checker should find.
    """
    geometry = survey.geometry
    shape = geometry.shape
    twt = survey.surface_twt_ms
    rows: list[dict] = []

    def add(name: str, kind: str, grid: np.ndarray) -> None:
        for i, inline in enumerate(geometry.inline_numbers):
            for j, xline in enumerate(geometry.xline_numbers):
                if np.isfinite(grid[i, j]):
                    rows.append({"horizon": name, "inline": int(inline), "xline": int(xline),
                                 "twt_ms": float(grid[i, j]), "kind": kind})

    add(TOP_PICK, "horizon", twt[survey.reservoir])
    add(CONTACT_PICK, "contact", twt[survey.contact])
    add(DEEP_PICK, "horizon", twt["U6"])
    crest_area = twt[survey.reservoir] < np.nanpercentile(twt[survey.reservoir], 35)
    add(FALSE_CONTACT_PICK, "contact", np.where(crest_area, twt["U7"], np.nan))
    # Flat spot C: flat in depth, below the top's spill point, wherever the top is shallower than it
    # (times through the default velocity function, which the survey's velocities follow).
    from pitfalls.physics.closure import spill_point
    closure = spill_point(survey.surface_depth_m[survey.reservoir])
    deep_depth_m = closure.spill_depth_m + contact_below_spill_m
    function = VelocityModel()
    deep_twt = function.twt_ms(np.full(shape, deep_depth_m), survey.seafloor_depth_m)
    add(DEEP_CONTACT_PICK, "contact", np.where(survey.surface_depth_m[survey.reservoir] < deep_depth_m, deep_twt, np.nan))
    record_end = survey.panels[0].t0_ms + survey.panels[0].dt_ms * (survey.panels[0].n_samples - 1)
    multiple = 2.0 * survey.seafloor_twt_ms
    add(MULTIPLE_PICK, "horizon", np.where(multiple < record_end - 40.0, multiple, np.nan))
    east = np.indices(shape)[1] >= shape[1] // 2
    add(SLIDE_PICK, "horizon", np.where(east, twt[survey.hydrate], twt["S3"]))
    truth = {
        "reservoir_top_rule": f"{CONTACT_PICK}={TOP_PICK}; {FALSE_CONTACT_PICK}={TOP_PICK}; {DEEP_CONTACT_PICK}={TOP_PICK}",
        "spill_depth_m": closure.spill_depth_m,
        "contact_depth_m": survey.contact_depth_m,
        "mistakes": {
            FALSE_CONTACT_PICK: "contact.conformable",
            DEEP_CONTACT_PICK: "contact.outside-closure",
            MULTIPLE_PICK: "multiple.seafloor",
            SLIDE_PICK: "crosscut.pick-follows-boundary",
        },
        "correct": [TOP_PICK, CONTACT_PICK, DEEP_PICK],
        "hydrate_base": {"inlines": [int(geometry.inline_numbers[0]), int(geometry.inline_numbers[-1])],
                         "xlines": [int(geometry.xline_numbers[0]), int(geometry.xline_numbers[-1])]},
    }
    return rows, truth


def write_survey(folder: str, survey: ModelledSurvey | None = None, sample_format: int = 5) -> dict[str, Any]:
    """Write the modelled survey (SEG-Y), its picks (CSV) and a rules file naming the contacts' top."""
    import os
    from pitfalls.modelling.segy_writer import write_picks_csv, write_volume_segy
    survey = model_survey() if survey is None else survey
    geometry = survey.geometry
    segy = os.path.join(folder, "survey.sgy")
    write_volume_segy(segy, survey.panels, list(geometry.inline_numbers), list(geometry.xline_numbers),
                      origin_x_m=geometry.origin_x_m, origin_y_m=geometry.origin_y_m, sample_format=sample_format)
    rows, truth = survey_picks(survey)
    picks = os.path.join(folder, "survey_picks.csv")
    write_picks_csv(picks, rows)
    rules = os.path.join(folder, "survey_rules.yaml")
    with open(rules, "w", encoding="utf-8") as handle:
        handle.write(f'contacts:\n  reservoir_top: "{truth["reservoir_top_rule"]}"\n')
    return {"segy": segy, "picks": picks, "rules": rules, "truth": truth, "survey": survey}
