"""Synthetic sections from depth models: multiples, peg-legs, contacts and boundaries.

Flat models with round numbers so every time has an analytic answer: water 750 m at
1500 m/s puts the seafloor at exactly 1000 ms.
"""
import numpy as np
import pytest

from pitfalls.modelling import shapes
from pitfalls.modelling.earth import EarthModel, Overprint, Unit, gardner_density_kg_m3
from pitfalls.modelling.section import model_section

N_TRACES = 6
WATER_M_S = 1500.0


def flat(depth_m):
    return np.full(N_TRACES, float(depth_m))


def strongest_in(trace, start_ms, end_ms, dt_ms=4.0):
    first = int(np.ceil(start_ms / dt_ms))
    window = trace[first : int(end_ms / dt_ms) + 1]
    index = int(np.argmax(np.abs(window)))
    return dt_ms * (first + index), float(window[index])


def water_over_mud():
    return EarthModel(WATER_M_S, flat(750.0), (Unit("mud", flat(750.0), 1700.0),))


def test_seafloor_time_and_coefficient():
    """Seafloor at 2 D / V = 1000 ms; R from Gardner (1974) densities, R = (Z2 - Z1)/(Z2 + Z1)."""
    modelled = model_section(water_over_mud(), n_samples=800)
    np.testing.assert_allclose(modelled.seafloor_twt_ms, 1000.0, atol=1e-9)
    rock = 1700.0 * gardner_density_kg_m3(1700.0)
    water = 1500.0 * 1030.0
    np.testing.assert_allclose(modelled.seafloor_reflection_coefficient, (rock - water) / (rock + water), rtol=1e-12)
    time_ms, amplitude = strongest_in(modelled.section.data[0], 900, 1100)
    assert time_ms == 1000.0 and amplitude > 0


def test_first_seafloor_multiple_is_reversed_at_twice_the_time():
    """REFERENCES.md items 1 and 10: first multiple at 2 t_sf, amplitude ratio A_m / A_p = -R.
    This model applies no spherical spreading (with it the ratio would be -R/2, item 2); 1e-6."""
    modelled = model_section(water_over_mud(), n_samples=800)
    trace = modelled.section.data[0]
    seafloor_ms, primary = strongest_in(trace, 900, 1100)
    multiple_ms, multiple = strongest_in(trace, 1900, 2100)
    assert abs(multiple_ms - 2 * modelled.seafloor_twt_ms[0]) <= 4.0
    assert np.sign(multiple) == -np.sign(primary)
    assert multiple / primary == pytest.approx(-modelled.seafloor_reflection_coefficient[0], abs=1e-6)
    second_ms, second = strongest_in(trace, 2900, 3100)
    assert second_ms == 3000.0 and second / primary == pytest.approx(modelled.seafloor_reflection_coefficient[0] ** 2, abs=1e-6)


def test_primaries_only_control_has_no_multiple():
    """multiples=False keeps the primary and removes the reverberation train."""
    modelled = model_section(water_over_mud(), n_samples=800, multiples=False)
    trace = modelled.section.data[0]
    assert abs(strongest_in(trace, 900, 1100)[1]) > 0.3
    assert np.max(np.abs(trace[int(1900 / 4) : int(2100 / 4)])) < 1e-6


def test_peg_leg_of_a_deep_reflector():
    """REFERENCES.md items 1 and 10: a reflector at t_r has a peg-leg at t_r + t_sf with -2 R A
    (two ray paths); r_d^2 terms allowed, 2e-3 on the ratio."""
    mud_top = flat(750.0)
    deep_top = flat(750.0 + 1700.0 * 0.400 / 2)  # 400 ms below the seafloor -> t_r = 1400 ms
    earth = EarthModel(WATER_M_S, mud_top, (Unit("mud", mud_top, 1700.0), Unit("silt", deep_top, 1800.0)))
    modelled = model_section(earth, n_samples=800)
    trace = modelled.section.data[0]
    np.testing.assert_allclose(modelled.surface_twt_ms["silt"], 1400.0, atol=1e-6)
    primary_ms, primary = strongest_in(trace, 1350, 1450)
    peg_ms, peg = strongest_in(trace, 2350, 2450)
    assert primary_ms == 1400.0 and peg_ms == 2400.0
    seafloor_r = modelled.seafloor_reflection_coefficient[0]
    assert peg / primary == pytest.approx(-2 * seafloor_r, abs=2e-3)


def reservoir_model(polarity_contact_depth_m=1300.0):
    """Mud over a folded sand (anticline, crest 1150 m) sealed by shale; gas above a flat contact."""
    n = 41
    seafloor = np.full(n, 750.0)
    sand_top = shapes.anticline(n, 20, 1150.0, 300.0, 8)
    shale_top = sand_top + 200.0
    units = (
        Unit("mud", seafloor, 1700.0),
        Unit("sand", sand_top, 2000.0),
        Unit("shale", shale_top, 2500.0),
    )
    contact = np.where(sand_top < polarity_contact_depth_m, polarity_contact_depth_m, np.nan)
    gas = Overprint("gwc", "gas", contact, -500.0, units=("sand",))
    return EarthModel(WATER_M_S, seafloor, units, (gas,)), sand_top, contact


def test_gas_contact_flat_in_depth_is_a_positive_event_at_its_depth():
    """A contact flat in depth: positive (same polarity as the seafloor) and at the time of its
    depth through the gas column, t = 2 D/Vw + 2 (z_top - D)/V_mud + 2 (Z - z_top)/V_gas, one sample."""
    earth, sand_top, contact = reservoir_model()
    modelled = model_section(earth, n_samples=600, dt_ms=4.0)
    expected = 1000.0 + 2000.0 * (sand_top - 750.0) / 1700.0 + 2000.0 * (contact - sand_top) / 1500.0
    present = np.isfinite(contact)
    assert present.sum() >= 5
    np.testing.assert_allclose(modelled.surface_twt_ms["gwc"][present], expected[present], atol=0.5)
    assert np.all(np.isnan(modelled.surface_twt_ms["gwc"][~present]))
    assert np.all(modelled.reflection_coefficient["gwc"][present] > 0)
    data = modelled.section.data
    for trace_index in np.flatnonzero(present):
        if contact[trace_index] - sand_top[trace_index] < 40.0:
            continue  # too close to the sand top to separate the two events
        time_ms, amplitude = strongest_in(data[trace_index], expected[trace_index] - 12, expected[trace_index] + 12)
        assert abs(time_ms - expected[trace_index]) <= 4.0
        assert amplitude > 0
    # the gas sand top is a strong negative (soft) event: bright spot
    assert np.all(modelled.reflection_coefficient["sand"][present] < 0)


def test_hydrate_base_is_reversed_and_diagenetic_front_is_not():
    """REFERENCES.md items 4c and 5: hydrate over free gas gives a negative (reversed) boundary;
    a diagenetic front (velocity rise below) keeps the seafloor polarity."""
    seafloor = flat(750.0)
    earth = EarthModel(
        WATER_M_S,
        seafloor,
        (Unit("mud", seafloor, 1700.0),),
        (
            Overprint("bsr", "hydrate", flat(750.0 + 255.0), 200.0, thickness_m=40.0, gas_velocity_drop_m_s=300.0),
            Overprint("opal", "diagenetic", flat(750.0 + 700.0), 400.0),
        ),
    )
    modelled = model_section(earth, n_samples=800)
    assert np.all(modelled.reflection_coefficient["bsr"] < -0.05)
    assert np.all(modelled.reflection_coefficient["opal"] > 0.05)
    trace = modelled.section.data[0]
    for name, sign in (("bsr", -1), ("opal", +1)):
        twt = modelled.surface_twt_ms[name][0]
        time_ms, amplitude = strongest_in(trace, twt - 10, twt + 10)
        assert abs(time_ms - twt) <= 4.0 and np.sign(amplitude) == sign


def test_polarity_minus_one_flips_everything():
    """polarity=-1 is the exact negative of polarity=+1, noise included (same seed)."""
    earth, _, _ = reservoir_model()
    positive = model_section(earth, n_samples=500, snr=4.0, seed=5)
    negative = model_section(earth, n_samples=500, snr=4.0, seed=5, polarity=-1)
    np.testing.assert_array_equal(negative.section.data, -positive.section.data)


def test_noise_level_and_seed():
    """SNR = RMS(signal at and below the seafloor) / RMS(noise); same seed gives the same data."""
    earth = water_over_mud()
    clean = model_section(earth, n_samples=600).section.data.astype(float)
    noisy = model_section(earth, n_samples=600, snr=6.0, seed=2).section.data.astype(float)
    again = model_section(earth, n_samples=600, snr=6.0, seed=2).section.data
    np.testing.assert_array_equal(noisy, again)
    below = np.arange(600)[np.newaxis, :] * 4.0 >= 1000.0
    signal_rms = np.sqrt(np.mean(clean[np.broadcast_to(below, clean.shape)] ** 2))
    noise_rms = np.sqrt(np.mean((noisy - clean) ** 2))
    assert signal_rms / noise_rms == pytest.approx(6.0, rel=1e-4)


def test_section_record():
    """The Section carries dt, t0, 1-based trace numbers, spacing and float32 data."""
    modelled = model_section(water_over_mud(), n_samples=300, dt_ms=2.0, name="flat")
    section = modelled.section
    assert section.data.shape == (N_TRACES, 300) and section.data.dtype == np.float32
    assert section.dt_ms == 2.0 and section.t0_ms == 0.0 and section.name == "flat"
    np.testing.assert_array_equal(section.trace_numbers, np.arange(1, N_TRACES + 1))
    assert section.trace_spacing_m == 12.5


def test_units_clipped_at_onlap_and_canyon():
    """A unit top above the previous top is clipped (absent: NaN time); a canyon cuts units."""
    n = 20
    seafloor = 750.0 + shapes.canyon(n, 10, 8, 60.0)
    upper = np.full(n, 780.0)
    lower = np.where(np.arange(n) < 5, 770.0, 800.0)  # above `upper` on the first five traces
    earth = EarthModel(WATER_M_S, seafloor, (Unit("a", seafloor, 1700.0), Unit("b", upper, 1800.0), Unit("c", lower, 1900.0)))
    modelled = model_section(earth, n_samples=400)
    assert np.all(np.isnan(modelled.surface_twt_ms["b"][:5]))
    assert np.all(np.isfinite(modelled.surface_twt_ms["b"][5:8]))
    np.testing.assert_allclose(modelled.seafloor_twt_ms, 2000.0 * seafloor / 1500.0, atol=0.34)


def test_shapes():
    """Shape helpers: half the relief at half_width from the crest; canyon 0 outside, full at axis."""
    fold = shapes.anticline(101, 50, 1000.0, 200.0, 10)
    assert fold[50] == 1000.0 and fold[40] == pytest.approx(1100.0) and fold[0] == pytest.approx(1200.0, abs=1e-3)
    np.testing.assert_allclose(shapes.dipping(4, 100.0, 2.5), [100.0, 102.5, 105.0, 107.5])
    incision = shapes.canyon(101, 50, 20, 80.0)
    assert incision[50] == 80.0 and incision[39] == 0.0 and incision[45] == pytest.approx(40.0)
