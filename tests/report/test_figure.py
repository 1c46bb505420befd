"""The figure: grey by default with the seafloor's sign dark, its own pick palette, the severity
colours of the terminal, the water column cropped, any matplotlib colour map by name."""
from __future__ import annotations

import itertools
import os
import subprocess
import sys

import numpy as np
import pytest

pytest.importorskip("matplotlib")
from skimage.color import deltaE_ciede2000, rgb2lab  # noqa: E402

from pitfalls import detectors  # noqa: E402
from pitfalls.engine import scan  # noqa: E402
from pitfalls.errors import PitfallsInputError  # noqa: E402
from pitfalls.io.rules import load_rules  # noqa: E402
from pitfalls.report import terminal  # noqa: E402
from pitfalls.report.colours import PICK_COLOURS, SEVERITY_COLOUR  # noqa: E402
from pitfalls.report.figure import check_colour_map, colour_map_for, crop_top_ms, make_figure  # noqa: E402

ROOT = os.path.join(os.path.dirname(__file__), "..", "..")
DEMO_SEGY = os.path.join(ROOT, "demo_data", "OT25-117.sgy")
DEMO_PICKS = os.path.join(ROOT, "demo_data", "OT25-117_picks.csv")


def _lab(hex_colour: str) -> np.ndarray:
    rgb = np.array([[[int(hex_colour[i:i + 2], 16) / 255.0 for i in (1, 3, 5)]]])
    return rgb2lab(rgb)[0, 0]


def test_pick_palette_never_reuses_a_severity_colour():
    """CIEDE2000 colour difference (scikit-image deltaE_ciede2000, a test-only reference): every pick
    colour at least 25 from every severity colour (about the difference between two named hues), and
    the pick colours at least 15 apart from one another."""
    for pick, severity in itertools.product(PICK_COLOURS, SEVERITY_COLOUR.values()):
        assert float(deltaE_ciede2000(_lab(pick), _lab(severity))) >= 25.0, (pick, severity)
    for first, second in itertools.combinations(PICK_COLOURS, 2):
        assert float(deltaE_ciede2000(_lab(first), _lab(second))) >= 15.0, (first, second)


def test_terminal_and_figure_share_the_severity_colours():
    for severity, colour in SEVERITY_COLOUR.items():
        assert terminal.SEVERITY_STYLE[severity] == f"bold {colour}"


def test_crop_keeps_a_small_margin_above_the_seafloor():
    seafloor = np.array([1000.0, 1050.0, np.nan, 1100.0])
    # margin = max(10 samples of 4 ms, 3 % of 4000 - 1000 ms) = 90 ms
    assert crop_top_ms(seafloor, [], 0.0, 4000.0, 4.0) == pytest.approx(910.0)
    # a pick or a box label shallower than the seafloor stays in view
    assert crop_top_ms(seafloor, [700.0], 0.0, 4000.0, 4.0) == pytest.approx(700.0 - 99.0)
    # never above the first sample
    assert crop_top_ms(np.array([20.0]), [], 0.0, 4000.0, 4.0) == pytest.approx(-2.0)


def test_the_seafloor_sign_is_dark_whichever_sign_it_has():
    positive = colour_map_for("gray_r", 1)
    negative = colour_map_for("gray_r", -1)
    assert positive(1.0)[:3] == pytest.approx((0.0, 0.0, 0.0))  # the largest positive amplitude is black
    assert negative(0.0)[:3] == pytest.approx((0.0, 0.0, 0.0))  # the largest negative amplitude is black
    assert positive(0.0)[:3] == pytest.approx((1.0, 1.0, 1.0))


def test_an_unknown_colour_map_is_a_user_error():
    with pytest.raises(PitfallsInputError) as caught:
        check_colour_map("not-a-map")
    assert caught.value.where == "" and "--figure-colours" in str(caught.value)
    check_colour_map("viridis")


@pytest.fixture(scope="module")
def demo_result():
    rules, path, sha = load_rules(None, detectors.rule_keys())
    return scan(DEMO_SEGY, [DEMO_PICKS], rules, path, sha), rules


def test_demo_figure_is_grey_cropped_and_keeps_picks_out_of_severity_colours(demo_result):
    from matplotlib.colors import to_hex
    result, rules = demo_result
    figure = make_figure(result, rules)
    axes = figure.axes[0]
    image = axes.images[0]
    assert image.get_cmap().name.startswith("gray")
    assert image.get_cmap()(1.0)[:3] == pytest.approx((0.0, 0.0, 0.0))  # the demo's seafloor is positive
    label = figure.axes[1].get_ylabel()
    assert "seafloor reflection is +" in label and "dark" in label
    bottom, top = axes.get_ylim()
    assert 900.0 < top < result.seafloor.twt_ms_median  # the water column above the seafloor is cut away
    pick_lines = [line for line in axes.get_lines() if "predicted seafloor multiple" not in line.get_label()]
    assert len(pick_lines) == len(result.picks)
    severity = {colour.lower() for colour in SEVERITY_COLOUR.values()}
    assert all(to_hex(line.get_color()) not in severity for line in pick_lines)
    boxes = [patch.get_edgecolor() for patch in axes.patches]
    assert boxes and all(to_hex(colour) in severity for colour in boxes)


def test_figure_colours_option_takes_a_colour_map_name(tmp_path):
    figure_path = tmp_path / "line.png"
    command = [sys.executable, "-m", "pitfalls", "scan", DEMO_SEGY, "--picks", DEMO_PICKS, "--quiet",
               "--gate", "off", "--figure", str(figure_path), "--figure-colours", "viridis"]
    done = subprocess.run(command, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    assert figure_path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    command[-1] = "no-such-map"
    refused = subprocess.run(command, capture_output=True, text=True, timeout=300)
    assert refused.returncode == 2 and len(refused.stderr.strip().splitlines()) == 1
    assert "no-such-map" in refused.stderr and "Traceback" not in refused.stderr
    without_figure = [part for part in command if part not in ("--figure", str(figure_path))]
    refused = subprocess.run(without_figure, capture_output=True, text=True, timeout=300)
    assert refused.returncode == 2 and "--figure" in refused.stderr


def test_box_labels_do_not_cover_one_another(demo_result):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    result, rules = demo_result
    figure = make_figure(result, rules)
    renderer = FigureCanvasAgg(figure).get_renderer()
    labels = [text.get_window_extent(renderer) for text in figure.axes[0].texts if text.get_text().startswith(" #")]
    assert len(labels) >= 5
    for first, second in itertools.combinations(labels, 2):
        assert not first.overlaps(second)
