"""The contacts detector on clean and faulty modelled sections, and on a real line.

Every case edits one clean earth model: water 600 m deep over beds folded into an anticline
(crest at trace index 150, half the relief 60 traces from it), all at 2000 m/s so that the
rules' velocity model (water 1500 m/s, sediment 2000 m/s, no gradient) converts time to depth
exactly, with reflections from density steps. A gas-water contact lies flat at 1150 m inside
the reservoir unit, whose top has its crest at 1100 m. The analytic answers come from the
model's geometry; the physics checks name REFERENCES items 1, 6a and 6b.
"""
from __future__ import annotations

import functools
from pathlib import Path

import numpy as np
import pytest
import yaml

from detecting import run_detector
from pitfalls.detectors import contacts
from pitfalls.model import Horizon, Picks, Section
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.shapes import anticline, canyon, dipping

ROOT = Path(__file__).resolve().parents[2]
REAL_LINE = ROOT.parent / "shared" / "data" / "real" / "penobscot_xl1155.sgy"
N_TRACES = 300
CREST_TRACE = 150
HALF_WIDTH_TRACES = 60
SEDIMENT_VELOCITY_M_S = 2000.0
WATER_VELOCITY_M_S = 1500.0


def load_rules() -> dict:
    rules = yaml.safe_load((ROOT / "rules" / "default.yaml").read_text())
    rules["velocity"].update(water_velocity_m_s=WATER_VELOCITY_M_S, seafloor_velocity_m_s=SEDIMENT_VELOCITY_M_S,
                             gradient_per_s=0.0)
    return rules


def build_earth(seafloor_depth_m=None, contact_depth_m=None, relief_m=150.0, gas_velocity_change_m_s=-300.0,
                gas=True) -> EarthModel:
    """The clean model, with one thing changed per faulty case."""
    seafloor = np.full(N_TRACES, 600.0) if seafloor_depth_m is None else seafloor_depth_m
    densities = (2150.0, 2000.0)
    units = [Unit("overburden", seafloor.copy(), SEDIMENT_VELOCITY_M_S, 2000.0)]
    for k, crest_m in enumerate((900.0, 950.0, 1000.0, 1050.0)):
        units.append(Unit(f"bed{k}", anticline(N_TRACES, CREST_TRACE, crest_m, relief_m, HALF_WIDTH_TRACES),
                          SEDIMENT_VELOCITY_M_S, densities[k % 2]))
    units.append(Unit("reservoir", anticline(N_TRACES, CREST_TRACE, 1100.0, relief_m, HALF_WIDTH_TRACES),
                      SEDIMENT_VELOCITY_M_S, 2150.0))
    for k, crest_m in enumerate((1200.0, 1250.0, 1300.0, 1350.0)):
        units.append(Unit(f"deep{k}", anticline(N_TRACES, CREST_TRACE, crest_m, relief_m, HALF_WIDTH_TRACES),
                          SEDIMENT_VELOCITY_M_S, densities[(k + 1) % 2]))
    contact = np.full(N_TRACES, 1150.0) if contact_depth_m is None else contact_depth_m
    overprints = (Overprint("gwc", "gas", contact, gas_velocity_change_m_s, units=("reservoir",)),) if gas else ()
    return EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), overprints)


CASES = {
    "clean": {},
    "canyon": {"seafloor_depth_m": 600.0 + canyon(N_TRACES, 120, 100, 200.0)},
    "impedance-decrease": {"gas_velocity_change_m_s": 400.0},
    "low-relief": {"relief_m": 40.0, "contact_depth_m": np.full(N_TRACES, 1170.0)},
    "tilted": {"contact_depth_m": dipping(N_TRACES, 1150.0 - 0.3 * CREST_TRACE, 0.3)},
    "no-gas": {"gas": False},
}


@functools.lru_cache(maxsize=None)
def modelled(case: str, n_samples: int = 390, multiples: bool = True, polarity: int = 1):
    """Modelled section (seeded noise, signal/noise 8) of one case; 390 samples stop before the
    first seafloor multiple at 2 x 800 ms (REFERENCES item 1) unless more are asked for."""
    return model_section(build_earth(**CASES[case]), dt_ms=4.0, n_samples=n_samples, snr=8.0,
                         multiples=multiples, polarity=polarity, seed=1, name=case)


def interpreted(model, contact_twt_ms=None, top=True) -> Picks:
    horizons = []
    if top:
        horizons.append(Horizon("reservoir top", "horizon", model.surface_twt_ms["reservoir"]))
    if contact_twt_ms is not False:
        contact = model.surface_twt_ms["gwc"] if contact_twt_ms is None else contact_twt_ms
        horizons.append(Horizon("gwc", "contact", contact))
    return Picks(tuple(horizons))


def ids(findings, severities=("high", "medium", "low")) -> set[str]:
    return {finding.id for finding in findings if finding.severity in severities}


def only(findings, finding_id):
    chosen = [finding for finding in findings if finding.id == finding_id]
    assert len(chosen) == 1, [f.id for f in findings]
    return chosen[0]


# --- clean cases ---------------------------------------------------------------------------------

def test_genuine_flat_contact_gives_nothing_above_low():
    """A gas contact flat in depth, cutting the fold, of the seafloor's sign, inside the closure."""
    model = modelled("clean")
    findings = run_detector(contacts, model.section, interpreted(model), load_rules())
    assert ids(findings, ("high", "medium")) == set()
    assert ids(findings) <= {"contact.unpicked-flat-event"}


def test_polarity_is_judged_against_the_seafloor():
    """The whole section flipped (the other display convention) leaves the genuine contact clean."""
    model = modelled("clean", polarity=-1)
    findings = run_detector(contacts, model.section, interpreted(model), load_rules())
    assert "contact.polarity" not in ids(findings)


def test_clean_folded_section_has_no_flat_event():
    """No fluid, no multiple in the record, no picks: nothing cuts the strata, so nothing is reported."""
    model = modelled("no-gas", n_samples=500, multiples=False)
    assert run_detector(contacts, model.section, Picks(), load_rules()) == []


# --- faulty cases ---------------------------------------------------------------------------------

def test_contact_picked_on_a_dipping_reflector_is_conformable():
    """A 'contact' pick on the flank of a folded bed: parallel to the strata, high. The stratal
    dip measured matches the model's flank dip, atan(dz/dx), within 0.5 degrees."""
    model = modelled("clean")
    pick = np.full(N_TRACES, np.nan)
    flank = slice(30, 100)
    pick[flank] = model.surface_twt_ms["bed1"][flank]
    findings = run_detector(contacts, model.section, interpreted(model, pick), load_rules())
    finding = only(findings, "contact.conformable")
    assert finding.severity == "high"
    assert finding.traces == (31, 100)
    # its tilt (and any closure breach) follow from tracking the bed: reported, but not as high
    consequences = [f for f in findings if f.id in ("contact.tilted", "contact.outside-closure")]
    assert consequences and all(f.severity != "high" and f.evidence["explained_by"] == "contact.conformable"
                                for f in consequences)
    assert finding.evidence["angle_between_deg_median"] < 1.0
    assert finding.evidence["parallel_fraction"] >= 0.8
    depth_m = anticline(N_TRACES, CREST_TRACE, 950.0, 150.0, HALF_WIDTH_TRACES)
    model_dip_deg = np.degrees(np.arctan(np.gradient(depth_m) / 12.5))[flank]
    assert finding.evidence["stratal_dip_deg_median"] == pytest.approx(np.median(model_dip_deg), abs=0.5)


def test_flat_contact_under_a_canyon_is_an_overburden_tilt():
    """Flat in depth under a 200 m canyon: the time tilt follows delta_t = delta_t_sf (1 - v_w/v_s)
    = 0.25 delta_t_sf (REFERENCES item 6b, slope accepted within 0.1); not contact.tilted."""
    model = modelled("canyon")
    findings = run_detector(contacts, model.section, interpreted(model), load_rules())
    assert "contact.tilted" not in ids(findings)
    finding = only(findings, "contact.overburden-tilt")
    factor = 1.0 - WATER_VELOCITY_M_S / SEDIMENT_VELOCITY_M_S
    assert finding.evidence["slope_on_seafloor_predicted"] == pytest.approx(factor, abs=1e-6)
    assert finding.evidence["slope_on_seafloor_observed"] == pytest.approx(factor, abs=0.1)
    assert abs(finding.evidence["depth_tilt_m_per_km"]) < 10.0
    assert finding.evidence["time_relief_ms"] == pytest.approx(finding.evidence["predicted_time_relief_ms"], abs=8.0)


def test_reversed_contact_is_a_polarity_finding():
    """A contact that is an impedance decrease (faster fluid above) reflects against the seafloor's sign."""
    model = modelled("impedance-decrease")
    assert np.nanmedian(model.reflection_coefficient["gwc"]) < 0 < np.median(model.seafloor_reflection_coefficient)
    finding = only(run_detector(contacts, model.section, interpreted(model), load_rules()), "contact.polarity")
    assert finding.evidence["reversed_fraction"] >= 0.9
    assert finding.severity == "high"


def test_contact_below_the_spill_point_is_outside_the_closure():
    """A 40 m fold whose shallower end (trace index 299) spills at 1100 + 40 (1 - 2^-(149/60)^2) m,
    with the contact at 1170 m: below the spill point everywhere."""
    model = modelled("low-relief")
    finding = only(run_detector(contacts, model.section, interpreted(model), load_rules()), "contact.outside-closure")
    assert finding.severity == "high"
    assert finding.evidence["spill_point_trace"] == 300
    assert finding.evidence["spill_point_twt_ms"] == pytest.approx(model.surface_twt_ms["reservoir"][299], abs=1e-9)
    spill_depth_m = 1100.0 + 40.0 * (1.0 - 2.0 ** (-(149.0 / 60.0) ** 2))
    assert finding.evidence["spill_point_depth_m"] == pytest.approx(spill_depth_m, abs=2.0)
    assert finding.evidence["crest_trace"] == CREST_TRACE + 1
    assert finding.evidence["traces_below_spill"] >= 250


def test_tilted_contact_reports_the_hubbert_gradient():
    """A contact tilting 0.3 m per 12.5 m trace (24 m/km): contact.tilted; the head gradients obey
    Hubbert (1953) dh/dx = (rho_w - rho_h) / rho_w dz/dx with the rules' densities (REFERENCES 6a)."""
    rules = load_rules()
    model = modelled("tilted")
    findings = run_detector(contacts, model.section, interpreted(model), rules)
    finding = only(findings, "contact.tilted")
    tilt = finding.evidence["depth_tilt_m_per_km"]
    assert tilt == pytest.approx(24.0, abs=3.0)
    settings = rules["contacts"]
    water = settings["water_density_kg_m3"]
    assert finding.evidence["head_gradient_oil_m_per_km"] == pytest.approx(
        abs(tilt) * (water - settings["oil_density_kg_m3"]) / water, rel=1e-12)
    assert finding.evidence["head_gradient_gas_m_per_km"] == pytest.approx(
        abs(tilt) * (water - settings["gas_density_kg_m3"]) / water, rel=1e-12)
    assert finding.evidence["plausible_gas"] is False  # 17 m/km of head is beyond 5 m/km
    assert "contact.overburden-tilt" not in ids(findings)


def test_unpicked_flat_spot_is_found():
    """The same gas contact left unpicked: a flat event cutting the fold at the contact's time."""
    model = modelled("clean")
    findings = run_detector(contacts, model.section, Picks(), load_rules())
    finding = only(findings, "contact.unpicked-flat-event")
    contact_twt_ms = model.surface_twt_ms["gwc"]
    assert finding.twt_ms[0] <= np.nanmax(contact_twt_ms) and finding.twt_ms[1] >= np.nanmin(contact_twt_ms)
    assert finding.severity in ("low", "medium")
    assert finding.evidence["near_seafloor_multiple"] is False


def test_flat_seafloor_multiple_is_named_as_such():
    """With the record running past 2 t_sf = 1600 ms, the flat first seafloor multiple (REFERENCES
    item 1) cuts the fold and is reported with near_seafloor_multiple."""
    model = modelled("no-gas", n_samples=500)
    findings = run_detector(contacts, model.section, Picks(), load_rules())
    finding = only(findings, "contact.unpicked-flat-event")
    assert finding.evidence["twt_ms_median"] == pytest.approx(1600.0, abs=16.0)
    assert finding.evidence["near_seafloor_multiple"] is True
    assert finding.evidence["seafloor_multiple_order"] == 2


# --- contract -------------------------------------------------------------------------------------

def test_inputs_are_not_changed_and_ids_are_declared():
    model = modelled("impedance-decrease")
    picks = interpreted(model)
    rules = load_rules()
    data_before = model.section.data.copy()
    picks_before = [h.twt_ms.copy() for h in picks.horizons]
    rules_before = yaml.safe_dump(rules)
    findings = run_detector(contacts, model.section, picks, rules)
    np.testing.assert_array_equal(model.section.data, data_before)
    for horizon, before in zip(picks.horizons, picks_before):
        np.testing.assert_array_equal(horizon.twt_ms, before)
    assert yaml.safe_dump(rules) == rules_before
    assert findings
    for finding in findings:
        assert finding.id.split(".", 1)[1] in contacts.KINDS and finding.id.startswith(contacts.FAMILY + ".")
        assert 0.0 <= finding.confidence <= 1.0
        assert all(isinstance(value, (bool, int, float, str)) for value in finding.evidence.values())


def test_rule_keys_match_default_rules():
    rules = yaml.safe_load((ROOT / "rules" / "default.yaml").read_text())
    assert set(rules[contacts.NAME]) == set(contacts.RULE_KEYS)
    for key, (kind, low, high) in contacts.RULE_KEYS.items():
        value = rules[contacts.NAME][key]
        assert isinstance(value, kind) and low <= value <= high, key


# --- real data -------------------------------------------------------------------------------------

def test_real_line_regression():
    """A real shelf line (see the data README) scanned with no picks. Its strata are close to flat,
    so no flat event cuts dipping beds: the detector reports nothing (regression value 0 findings,
    recorded when the detector was written; a change means the flat-event rules changed)."""
    if not REAL_LINE.exists():
        pytest.skip(f"real test line not present at {REAL_LINE}")
    segyio = pytest.importorskip("segyio")
    with segyio.open(str(REAL_LINE), ignore_geometry=True) as handle:
        data = np.stack([np.asarray(trace, dtype=np.float32) for trace in handle.trace])
    section = Section(data=data, dt_ms=4.0, t0_ms=0.0, trace_spacing_m=12.5,
                      trace_numbers=np.arange(1, data.shape[0] + 1), name="real line")
    rules = yaml.safe_load((ROOT / "rules" / "default.yaml").read_text())
    findings = run_detector(contacts, section, Picks(), rules)
    flat_events = [f for f in findings if f.id == "contact.unpicked-flat-event"]
    assert len(flat_events) == 0  # regression value: 0 unpicked flat events on this line
    assert findings == []

