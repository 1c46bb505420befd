"""Equal-time layered-earth recursion against REFERENCES.md item 10 and Backus (1959)."""
import numpy as np
import pytest

from pitfalls.modelling.recursion import layered_response, primary_response

ITEM_10_ROWS = [
    ([0.3], [0, 0.3, -0.09, 0.027, -0.0081, 0.00243, -0.000729, 0.0002187, -0.00006561, 0.000019683]),
    ([0.5, -0.3], [0, 0.5, -0.475, 0.31625, -0.253187, 0.183491, -0.140178, 0.104109, -0.078492, 0.058705]),
    ([0.0, 0.4], [0, 0, 0.4, 0, -0.16, 0, 0.064, 0, -0.0256, 0]),
    ([0.4, 0.0, -0.2], [0, 0.4, -0.16, -0.104, 0.1088, -0.08384, 0.02144, 0.006477, -0.017644, 0.011864]),
]


@pytest.mark.parametrize("reflection, expected", ITEM_10_ROWS)
def test_item_10_table(reflection, expected):
    """REFERENCES.md item 10 table (6 significant figures printed, so 1e-6 on the rounded
    entries); the exact closed-form entries are checked to 1e-12 below."""
    response = layered_response(np.array(reflection), n_out=10)
    np.testing.assert_allclose(response, expected, atol=1e-6, rtol=0)


def test_item_10_exact_entries_to_1e_12():
    """REFERENCES.md item 10 hand checks, exact arithmetic (tolerance 1e-12)."""
    row_two = layered_response(np.array([0.5, -0.3]), n_out=10)
    assert row_two[2] == pytest.approx(-0.5**2 + (1 - 0.25) * (-0.3), abs=1e-12)  # -0.475
    last = layered_response(np.array([0.4, 0.0, -0.2]), n_out=10)
    primary = 0.84 * (-0.2)
    assert last[3] == pytest.approx(0.4**3 + primary, abs=1e-12)  # -0.104
    assert last[4] == pytest.approx(-0.4**4 + 2 * (-0.4) * primary, abs=1e-12)  # 0.1088
    assert last[5] == pytest.approx(0.4**5 + 3 * 0.16 * primary + 0.84 * (-0.2) * (-0.4) * (-0.2), abs=1e-12)
    deep_water = layered_response(np.array([0.0, 0.4]), n_out=10)
    np.testing.assert_allclose(deep_water, [0, 0, 0.4, 0, -0.16, 0, 0.064, 0, -0.0256, 0], atol=1e-12, rtol=0)


@pytest.mark.parametrize("seafloor_r", [0.1, 0.3, 0.6])
def test_single_water_layer_is_the_backus_reverberation_train(seafloor_r):
    """Backus (1959), REFERENCES.md item 10: U = R z / (1 + R z) = R z - R^2 z^2 + R^3 z^3 ... (1e-6)."""
    water_layers = 7
    reflection = np.zeros(water_layers + 1)
    reflection[water_layers] = seafloor_r
    period = water_layers + 1
    response = layered_response(reflection, n_out=6 * period + 1)
    expected = np.zeros(6 * period + 1)
    for order in range(1, 7):
        expected[order * period] = -((-seafloor_r) ** order)  # R, -R^2, R^3, ...
    np.testing.assert_allclose(response, expected, atol=1e-6, rtol=0)


def _series_response(reflection, n_out):
    """Independent z-domain form (REFERENCES.md item 10): R_k = (r_k + z R_{k+1}) / (1 + r_k z R_{k+1}),
    X = z R_1, U = X / (1 + X), by truncated power-series division."""

    def divide(numerator, denominator):
        quotient = np.zeros(n_out)
        remainder = numerator.copy()
        for index in range(n_out):
            quotient[index] = remainder[index] / denominator[0]
            remainder[index:] -= quotient[index] * denominator[: n_out - index]
        return quotient

    def shift(series):
        return np.concatenate([[0.0], series[:-1]])

    below = np.zeros(n_out)
    below[0] = reflection[-1]
    for coefficient in reflection[-2::-1]:
        delayed = shift(below)
        numerator = delayed.copy()
        numerator[0] += coefficient
        denominator = coefficient * delayed
        denominator[0] += 1.0
        below = divide(numerator, denominator)
    surface = shift(below)
    denominator = surface.copy()
    denominator[0] += 1.0
    return divide(surface, denominator)


def test_lattice_matches_independent_series_form():
    """The lattice and the series recursion are two forms of the same response (REFERENCES.md item 10
    reports agreement to 3e-17; 1e-12 here), on a random 12-interface model."""
    rng = np.random.default_rng(10)
    reflection = rng.uniform(-0.4, 0.4, 12)
    reflection[:3] = 0.0
    np.testing.assert_allclose(layered_response(reflection, n_out=40), _series_response(reflection, 40), atol=1e-12)
    row = [0.4, 0.0, -0.2]
    np.testing.assert_allclose(_series_response(np.array(row), 10), ITEM_10_ROWS[3][1], atol=1e-6)


def test_peg_leg_coefficients_below_a_water_layer():
    """REFERENCES.md items 1 and 10: a weak deep reflector r_d under water with seafloor r_1 gives
    (1 - r_1^2) r_d / (1 + r_1 z^q)^2: primary, then -2 r_1, +3 r_1^2 times it (1e-6 for r_d^2 terms)."""
    seafloor_r, deep_r, water, deep = 0.3, 0.01, 10, 25
    reflection = np.zeros(deep + 1)
    reflection[water] = seafloor_r
    reflection[deep] = deep_r
    response = layered_response(reflection, n_out=deep + 2 * (water + 1) + 3)
    primary = (1 - seafloor_r**2) * deep_r
    period = water + 1
    assert response[deep + 1] == pytest.approx(primary, abs=1e-12)
    assert response[deep + 1 + period] == pytest.approx(-2 * seafloor_r * primary, abs=1e-6)
    assert response[deep + 1 + 2 * period] == pytest.approx(3 * seafloor_r**2 * primary, abs=1e-6)


def test_traces_are_independent_and_vectorised():
    """A batch of traces gives the same as each trace alone, including different water depths."""
    rng = np.random.default_rng(3)
    reflection = rng.uniform(-0.2, 0.2, (5, 30))
    for trace_index in range(5):
        reflection[trace_index, : 3 + trace_index] = 0.0
    batch = layered_response(reflection, n_out=50)
    for trace_index in range(5):
        np.testing.assert_allclose(batch[trace_index], layered_response(reflection[trace_index], n_out=50), atol=1e-15)


def test_no_surface_coefficient_leaves_primaries_and_interbeds():
    """With r_0 = 0 the single-layer response is the primary alone; primary_response matches
    the first arrivals with two-way transmission (1 - r^2)."""
    single = layered_response(np.array([0.0, 0.3]), surface_coefficient=0.0, n_out=8)
    np.testing.assert_allclose(single, [0, 0, 0.3, 0, 0, 0, 0, 0], atol=1e-15)
    reflection = np.array([0.4, 0.0, -0.2])
    np.testing.assert_allclose(primary_response(reflection, 5), [0, 0.4, 0, 0.84 * -0.2, 0], atol=1e-15)


def test_rejects_total_reflection():
    with pytest.raises(ValueError):
        layered_response(np.array([0.2, 1.0]))
