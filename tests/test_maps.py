"""Map-view checks of a volume, on analytic surfaces (no seismic needed).

The surfaces are built in depth and turned into time through the velocity function the checks
use, so every expected number is analytic: a flat contact has no tilt, a contact that copies a
horizon has a constant interval below it, and a dome's spill depth is the shallowest depth on
the border of its map (a paraboloid deepens monotonically away from its crest).
"""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls import detectors as registry
from pitfalls.io.rules import load_rules
from pitfalls.maps import SurveyView, judge_contact, multiple_evidence, named_top
from pitfalls.model import Horizon
from pitfalls.physics.surfaces import fit_grid_geometry
from pitfalls.physics.velocity import VelocityModel

BIN_M = 25.0
SHAPE = (31, 41)


@pytest.fixture(scope="module")
def rules():
    loaded, _, _ = load_rules(None, registry.rule_keys())
    return loaded


def make_view(horizons_depth: dict[str, tuple[str, np.ndarray]], seafloor_depth_m: float | np.ndarray = 800.0):
    velocity = VelocityModel()
    rows, columns = np.indices(SHAPE, dtype=float)
    x_m, y_m = 431000.0 + BIN_M * columns, 7213000.0 + BIN_M * rows
    grid = fit_grid_geometry(np.arange(1001, 1001 + SHAPE[0]), np.arange(201, 201 + SHAPE[1]), x_m, y_m, 12.5)
    seafloor_depth = np.broadcast_to(np.asarray(seafloor_depth_m, dtype=float), SHAPE)
    seafloor_twt = velocity.twt_ms(seafloor_depth, seafloor_depth)
    horizons = tuple(Horizon(name, kind, velocity.twt_ms(depth, seafloor_depth))
                     for name, (kind, depth) in horizons_depth.items())
    return SurveyView(grid, np.array(seafloor_twt), horizons, velocity)


def dome(crest_m=1500.0, curvature_m_per_bin2=0.2):
    rows, columns = np.indices(SHAPE, dtype=float)
    return crest_m + curvature_m_per_bin2 * ((rows - 15) ** 2 + (columns - 20) ** 2)


def settings_with(rules, **changes):
    return {**rules["contacts"], **changes}


def ids(findings, minimum="low"):
    order = {"high": 0, "medium": 1, "low": 2}
    return sorted((f.id, f.severity) for f in findings if order[f.severity] <= order[minimum])


def test_flat_contact_inside_a_dome_is_clean(rules):
    top = dome()
    contact = np.where(top < 1530.0, 1530.0, np.nan)
    view = make_view({"Top": ("horizon", top), "GWC": ("contact", contact)})
    found = judge_contact(view, view.horizon("GWC"), settings_with(rules, reservoir_top="GWC=Top"), rules["maps"], {})
    assert ids(found) == []


def test_contact_copying_the_top_is_conformable_and_its_tilt_explained(rules):
    """The pick keeps 40 m below the top over a flank dipping 0.1 m/m (5.7 deg): it is a bed."""
    rows, columns = np.indices(SHAPE, dtype=float)
    top = 1500.0 + 0.1 * BIN_M * columns
    view = make_view({"Top": ("horizon", top), "False": ("contact", top + 40.0)})
    found = judge_contact(view, view.horizon("False"), settings_with(rules, reservoir_top="False=Top"), rules["maps"], {})
    conformable = [f for f in found if f.id == "contact.conformable"]
    assert conformable and conformable[0].severity == "high"
    assert conformable[0].evidence["thickness_spread_m"] == pytest.approx(0.0, abs=0.5)
    # Its depth tilt (100 m/km towards +X, azimuth 90) is reported, but as a consequence of following the bed.
    tilted = [f for f in found if f.id == "contact.tilted"]
    assert tilted and tilted[0].severity == "medium" and tilted[0].evidence["explained_by"] == "contact.conformable"
    assert tilted[0].evidence["depth_tilt_m_per_km"] == pytest.approx(100.0, rel=0.02)
    assert tilted[0].evidence["tilt_azimuth_deg"] == pytest.approx(90.0, abs=1.0)


def test_contact_below_the_spill_point_is_outside_closure(rules):
    """Dome crest 1500 m, 0.2 m/bin^2: the nearest border is 15 bins from the crest, so the spill depth is
    1500 + 0.2 * 15^2 = 1545 m (analytic). A flat contact at 1575 m is 30 m below it."""
    top = dome()
    border = np.concatenate((top[0], top[-1], top[:, 0], top[:, -1]))
    assert border.min() == pytest.approx(1545.0)
    contact = np.where(top < 1575.0, 1575.0, np.nan)
    view = make_view({"Top": ("horizon", top), "Deep": ("contact", contact)})
    named = judge_contact(view, view.horizon("Deep"), settings_with(rules, reservoir_top="Deep=Top"), rules["maps"], {})
    outside = [f for f in named if f.id == "contact.outside-closure"]
    assert outside and outside[0].severity == "high"
    evidence = outside[0].evidence
    assert evidence["spill_depth_m"] == pytest.approx(1545.0, abs=1.0)  # depth conversion round trip
    assert evidence["below_spill_m"] == pytest.approx(30.0, abs=1.0)
    assert evidence["spill_inline_xline"][0] in (1001, 1031)  # the pass is on the near (north or south) border
    # Without a named top the same breach is only a note (the nearest bed above need not be the trap).
    unnamed = judge_contact(view, view.horizon("Deep"), settings_with(rules, reservoir_top=""), rules["maps"], {})
    assert [f.severity for f in unnamed if f.id == "contact.outside-closure"] == ["low"]


def test_contact_inside_closure_is_not_outside(rules):
    top = dome()
    contact = np.where(top < 1540.0, 1540.0, np.nan)  # 5 m above the 1545 m spill: held
    view = make_view({"Top": ("horizon", top), "GWC": ("contact", contact)})
    found = judge_contact(view, view.horizon("GWC"), settings_with(rules, reservoir_top="GWC=Top"), rules["maps"], {})
    assert "contact.outside-closure" not in [f.id for f in found]


def test_tilted_flat_contact_gets_the_hubbert_grading(rules):
    """A contact tilting 20 m/km (not following any bed) under a dome: oil over water needs a head gradient
    of 20 * (1050 - 800) / 1050 = 4.8 m/km (Hubbert 1953, from memory; the relation is checked in
    tests/physics/test_hydrodynamics.py), at the 5 m/km plausibility limit, so medium."""
    top = dome(curvature_m_per_bin2=0.4)
    rows, columns = np.indices(SHAPE, dtype=float)
    tilted = 1560.0 + 0.02 * BIN_M * (columns - 20)
    view = make_view({"Top": ("horizon", top), "GWC": ("contact", np.where(top < tilted, tilted, np.nan))})
    found = judge_contact(view, view.horizon("GWC"), settings_with(rules, reservoir_top="GWC=Top"), rules["maps"], {})
    tilt = [f for f in found if f.id == "contact.tilted"]
    assert tilt and tilt[0].severity == "medium"
    assert tilt[0].evidence["depth_tilt_m_per_km"] == pytest.approx(20.0, rel=0.05)
    assert tilt[0].evidence["head_gradient_oil_m_per_km"] == pytest.approx(20.0 * 250.0 / 1050.0, rel=0.05)
    assert "contact.conformable" not in [f.id for f in found]


def test_multiple_evidence_in_map_view():
    """A seafloor dipping obliquely (0.06 m/m east, 0.045 m/m north: 4.29 deg towards azimuth 53.1,
    atan(0.075) and atan2(0.06, 0.045)) and a pick on its first multiple (2 t_sf): dip ratio 2."""
    rows, columns = np.indices(SHAPE, dtype=float)
    seafloor = 800.0 + 0.06 * BIN_M * columns + 0.045 * BIN_M * rows
    velocity = VelocityModel()
    view = make_view({}, seafloor)
    seafloor_twt = view.seafloor_twt_ms
    view = SurveyView(view.grid, seafloor_twt, (Horizon("M", "horizon", 2.0 * seafloor_twt),), velocity)
    evidence = multiple_evidence(view, "M")
    assert evidence["dip_ratio_map"] == pytest.approx(2.0, rel=1e-6)
    assert evidence["seafloor_true_dip_deg"] == pytest.approx(np.degrees(np.arctan(0.075)), abs=0.2)
    assert evidence["seafloor_dip_azimuth_deg"] == pytest.approx(np.degrees(np.arctan2(0.06, 0.045)), abs=0.5)
    assert evidence["pick_dip_azimuth_deg"] == pytest.approx(evidence["seafloor_dip_azimuth_deg"], abs=1e-6)


def test_named_top_rule():
    assert named_top("GWC", "") is None
    assert named_top("GWC", "Top") == "Top"
    assert named_top("GWC", "A=X; GWC = Top res ") == "Top res"
    assert named_top("OWC", "GWC=Top") is None
    assert named_top("GWC", "nearest-above") == "nearest-above"
