"""The example override files in rules/: they load over the built-in defaults and their numbers hold."""
from __future__ import annotations

import math
import pathlib

import gsw
import pytest
import yaml

from pitfalls import detectors
from pitfalls.io.rules import load_rules
from pitfalls.physics.hydrate import stability_base_depth_m

RULES_FOLDER = pathlib.Path(__file__).resolve().parents[2] / "rules"
EXAMPLES = ["warm_enclosed_sea.yaml", "shallow_water.yaml"]


def _sound_speed_m_s(absolute_salinity_g_kg: float, temperature_c: float, pressure_dbar: float) -> float:
    """TEOS-10 sound speed through the gsw library (IOC, SCOR and IAPSO 2010, Manuals and Guides No. 56)."""
    conservative = gsw.CT_from_t(absolute_salinity_g_kg, temperature_c, pressure_dbar)
    return float(gsw.sound_speed(absolute_salinity_g_kg, conservative, pressure_dbar))


@pytest.mark.parametrize("name", EXAMPLES)
def test_example_overrides_load_over_the_built_in_defaults(name):
    path = RULES_FOLDER / name
    overrides = yaml.safe_load(path.read_text(encoding="utf-8"))
    rules, used, digest = load_rules(str(path), detectors.rule_keys())
    defaults, _, _ = load_rules(None, detectors.rule_keys())
    assert used == str(path) and len(digest) == 64
    changed = {(section, key) for section, values in overrides.items() for key in values}
    assert changed, "an example override must change something"
    for section, values in defaults.items():
        for key, value in values.items():
            expected = overrides[section][key] if (section, key) in changed else value
            assert rules[section][key] == expected, f"{section}.{key}"
            if (section, key) in changed:
                assert rules[section][key] != value, f"{section}.{key} repeats the default"


def test_warm_enclosed_sea_water_velocity_lies_in_the_teos10_range_its_comment_gives():
    """TEOS-10 via gsw: 13 C, 38.7 g/kg gives 1513 m/s at 500 dbar and 1537 m/s at 2000 dbar (the comment's numbers)."""
    rules, _, _ = load_rules(str(RULES_FOLDER / "warm_enclosed_sea.yaml"), detectors.rule_keys())
    shallow, deep = _sound_speed_m_s(38.7, 13.0, 500.0), _sound_speed_m_s(38.7, 13.0, 2000.0)
    assert round(shallow) == 1513 and round(deep) == 1537
    assert shallow < rules["velocity"]["water_velocity_m_s"] < deep


def test_shallow_water_velocity_lies_in_the_teos10_range_its_comment_gives():
    """TEOS-10 via gsw: 35.2 g/kg at 50 dbar gives 1491 m/s at 10 C and 1508 m/s at 15 C (the comment's numbers)."""
    rules, _, _ = load_rules(str(RULES_FOLDER / "shallow_water.yaml"), detectors.rule_keys())
    cold, warm = _sound_speed_m_s(35.2, 10.0, 50.0), _sound_speed_m_s(35.2, 15.0, 50.0)
    assert round(cold) == 1491 and round(warm) == 1508
    assert cold < rules["velocity"]["water_velocity_m_s"] < warm


def test_warm_bottom_water_lifts_the_hydrate_stability_base_as_the_comment_says():
    """Dickens & Quinby-Hunt (1994) boundary: much shallower, or absent, at 13 C than at the default's 4 C."""
    defaults, _, _ = load_rules(None, detectors.rule_keys())
    warm, _, _ = load_rules(str(RULES_FOLDER / "warm_enclosed_sea.yaml"), detectors.rule_keys())
    gradient = defaults["crosscut"]["geothermal_gradient_c_per_km"]
    for water_depth_m in (1500.0, 2000.0):
        open_ocean = stability_base_depth_m(water_depth_m, defaults["crosscut"]["seafloor_temperature_c"], gradient)
        enclosed = stability_base_depth_m(water_depth_m, warm["crosscut"]["seafloor_temperature_c"], gradient)
        assert enclosed < 0.5 * open_ocean
    assert math.isnan(stability_base_depth_m(1000.0, warm["crosscut"]["seafloor_temperature_c"], gradient))


def test_one_degree_moves_the_hydrate_base_by_tens_of_metres():
    """The defaults' comment: each 1 C of bottom water moves the predicted base by tens of metres."""
    for water_depth_m in (1000.0, 2000.0):
        shift_m = stability_base_depth_m(water_depth_m, 3.0, 40.0) - stability_base_depth_m(water_depth_m, 4.0, 40.0)
        assert 10.0 <= shift_m < 100.0


def test_no_hydrate_is_stable_under_the_shallow_water_example():
    """Dickens & Quinby-Hunt (1994) boundary: no stability zone under 200 m of water at the file's 10 C."""
    rules, _, _ = load_rules(str(RULES_FOLDER / "shallow_water.yaml"), detectors.rule_keys())
    temperature_c = rules["crosscut"]["seafloor_temperature_c"]
    assert math.isnan(stability_base_depth_m(200.0, temperature_c, rules["crosscut"]["geothermal_gradient_c_per_km"]))
