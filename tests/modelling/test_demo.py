"""The bundled demo: deterministic files, planted mistakes where the truth file says they are."""
import json

import numpy as np
import pytest
import segyio

from pitfalls.modelling import demo


@pytest.fixture(scope="module")
def scenario():
    return demo.build_demo()


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    first = demo.write_demo(tmp_path_factory.mktemp("first"))
    second = demo.write_demo(tmp_path_factory.mktemp("second"))
    return first, second


def test_write_demo_is_byte_identical_and_small(written):
    """Seeded noise and jitter: two runs give the same bytes; SEG-Y <= 3 MB, all files < 5 MB."""
    first, second = written
    total = 0
    for key in ("segy", "picks", "truth"):
        with open(first[key], "rb") as a, open(second[key], "rb") as b:
            content = a.read()
            assert content == b.read(), key
            total += len(content)
    with open(first["segy"], "rb") as handle:
        assert len(handle.read()) <= 3 * 1024 * 1024
    assert total < 5 * 1024 * 1024
    assert first["expected_ids"] == ["multiple.seafloor", "contact.conformable", "crosscut.pick-follows-boundary"]


def test_segy_geometry(written):
    """600 traces x 1000 samples at 4 ms from 0 ms, inline 117, crossline = trace number (SEG-Y rev 1 bytes 189/193)."""
    with segyio.open(written[0]["segy"], ignore_geometry=True) as handle:
        assert handle.tracecount == demo.N_TRACES
        assert len(handle.samples) == demo.N_SAMPLES
        assert segyio.tools.dt(handle) == 4000.0 and handle.samples[0] == 0.0
        assert handle.header[0][segyio.TraceField.INLINE_3D] == demo.INLINE_NUMBER
        assert handle.header[599][segyio.TraceField.CROSSLINE_3D] == 600
        assert b"INVENTED BASIN" in handle.text[0]


def test_every_planted_mistake_is_in_the_truth_file(written, scenario):
    """The truth file names each planted mistake with id, horizon, trace range and a sentence,
    and lists the genuine contact as must-not-be-high."""
    with open(written[0]["truth"]) as handle:
        truth = json.load(handle)
    assert truth == json.loads(json.dumps(scenario.truth))
    by_id = {item["id"]: item for item in truth["expected"]}
    assert set(by_id) == {"multiple.seafloor", "contact.conformable", "crosscut.pick-follows-boundary"}
    for item in truth["expected"]:
        assert item["horizon"] in [h.name for h in scenario.picks.horizons]
        first, last = item["traces"]
        assert 1 <= first < last <= demo.N_TRACES
        assert len(item["sentence"]) > 40
    assert by_id["contact.conformable"]["horizon"] in [h.name for h in scenario.picks.of_kind("contact")]
    genuine = truth["must_not_be_high"][0]
    assert genuine["horizon"] == demo.CONTACT_NAME and genuine["kind"] == "contact"


def test_multiple_hop_lies_on_twice_the_seafloor_time(scenario):
    """Over the stated range the hop picks are within one sample (4 ms) of 2 t_sf (REFERENCES item 1),
    and the section there is reversed relative to the seafloor (first multiple, item 10)."""
    item = next(i for i in scenario.truth["expected"] if i["id"] == "multiple.seafloor")
    first, last = item["traces"]
    picks = scenario.picks.by_name(item["horizon"]).twt_ms[first - 1 : last]
    seafloor = scenario.modelled.seafloor_twt_ms[first - 1 : last]
    assert np.all(np.isfinite(picks))
    assert np.max(np.abs(picks - 2.0 * seafloor)) <= demo.DT_MS
    before = scenario.picks.by_name(item["horizon"]).twt_ms[first - 30 : first - 1]
    primary = scenario.modelled.surface_twt_ms[demo.HOP_UNIT][first - 30 : first - 1]
    assert np.max(np.abs(before - primary)) <= demo.DT_MS  # a true primary before the hop
    data = scenario.modelled.section.data
    rows = np.arange(first - 1, last)
    multiple_samples = np.round(2.0 * seafloor / demo.DT_MS).astype(int)
    seafloor_samples = np.round(seafloor / demo.DT_MS).astype(int)
    assert np.median(np.sign(data[rows, multiple_samples]) * np.sign(data[rows, seafloor_samples])) == -1


def test_jump_lands_on_the_hydrate_boundary(scenario):
    """From the jump trace on, the pick is within one sample of the modelled hydrate base,
    before it within one sample of its stratigraphic reflector; the boundary is reversed (R < 0)."""
    item = next(i for i in scenario.truth["expected"] if i["id"] == "crosscut.pick-follows-boundary")
    jump_index = item["jump_trace"] - 1
    pick = scenario.picks.by_name(item["horizon"]).twt_ms
    boundary = scenario.modelled.surface_twt_ms["hydrate base"]
    unit = scenario.modelled.surface_twt_ms[demo.JUMP_UNIT]
    assert np.max(np.abs(pick[jump_index:] - boundary[jump_index:])) <= demo.DT_MS
    assert np.max(np.abs(pick[demo.FIRST_PICKED_INDEX : jump_index] - unit[demo.FIRST_PICKED_INDEX : jump_index])) <= demo.DT_MS
    assert abs(unit[jump_index] - boundary[jump_index]) <= demo.DT_MS  # the jump happens where they meet
    assert abs(unit[-1] - boundary[-1]) > 40.0  # and then they part: the boundary cuts the strata
    assert np.all(scenario.modelled.reflection_coefficient["hydrate base"] < 0)


def test_hydrate_base_sits_where_the_phase_boundary_puts_it(scenario):
    """The modelled hydrate base is the Dickens & Quinby-Hunt stability base for the scenario's
    seafloor temperature and gradient (REFERENCES item 4c method), 0.5 m."""
    from pitfalls.physics.hydrate import stability_base_depth_m

    earth, _ = demo.demo_earth_model()
    hydrate = next(o for o in earth.overprints if o.kind == "hydrate")
    for index in (0, 140, 599):
        water_m = earth.seafloor_depth_m[index]
        expected = stability_base_depth_m(water_m, demo.SEAFLOOR_TEMPERATURE_C, demo.GEOTHERMAL_GRADIENT_C_PER_KM)
        assert hydrate.depth_m[index] - water_m == pytest.approx(expected, abs=0.5)


def test_conformable_contact_dips_and_genuine_contact_is_flat_in_depth(scenario):
    """(b) follows a dipping reflector (> 0.5 ms per trace); (d) is the contact overprint itself,
    of the seafloor's polarity, and flat in depth (one depth on every trace where present)."""
    item = next(i for i in scenario.truth["expected"] if i["id"] == "contact.conformable")
    assert abs(item["dip_ms_per_trace"]) > 0.5
    genuine = scenario.picks.by_name(demo.CONTACT_NAME).twt_ms
    truth = scenario.modelled.surface_twt_ms["Belsaro GWC"]
    present = np.isfinite(truth)
    assert present.sum() > 50
    np.testing.assert_array_equal(np.isfinite(genuine), present)
    assert np.max(np.abs(genuine[present] - truth[present])) <= demo.DT_MS
    assert np.all(scenario.modelled.reflection_coefficient["Belsaro GWC"][present] > 0)
    earth, _ = demo.demo_earth_model()
    contact = next(o for o in earth.overprints if o.kind == "gas").depth_m
    assert np.nanmax(contact) == np.nanmin(contact)


def test_build_demo_model_returns_section_and_picks(scenario, monkeypatch):
    """build_demo_model gives the ModelledSection and Picks with a seafloor pick and the contacts
    (the scenario fixture stands in for a second modelling run)."""
    monkeypatch.setattr(demo, "build_demo", lambda: scenario)
    modelled, picks = demo.build_demo_model()
    assert modelled is scenario.modelled and picks is scenario.picks
    assert modelled.section.data.shape == (demo.N_TRACES, demo.N_SAMPLES)
    assert [h.name for h in picks.of_kind("seafloor")] == ["Seafloor"]
    assert {h.name for h in picks.of_kind("contact")} == {demo.CONTACT_NAME, demo.CONTACT_MISTAKE}
