"""Zero-offset synthetic sections with every multiple, from a depth model.

Per trace: the depth model is sampled as acoustic impedance in equal two-way-time layers of
half the output sample interval; the equal-time layered-earth recursion (Goupillaud 1961,
free surface R = -1) gives the response with all surface and interbed multiples; the
response is convolved with the wavelet at that fine interval and every second sample is kept
(the wavelet has no energy near the output Nyquist frequency, so no anti-alias filter is
needed for the wavelets used here); band-limited noise is added; the polarity is applied last.

The model is 1-D per trace (vertical rays, no diffractions) and has no spherical spreading,
absorption or gain: the first seafloor multiple is exactly -R_sf times the seafloor primary
(with spreading it would be -R_sf / 2). Reflector times are quantised to the layer time
(half a sample).

References
----------
.. [1] Goupillaud, P. L., 1961, An approach to inverse filtering of near-surface layer effects
       from seismic records, Geophysics 26(6), 754-760. (from memory)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pitfalls.model import Section
from pitfalls.modelling.earth import DEPTH_STEP_M, EarthModel, depth_grid, impedance_in_time, unit_tops_m
from pitfalls.modelling.recursion import layered_response, primary_response
from pitfalls.modelling.wavelets import add_noise, convolve_traces, ormsby, ricker

LAYERS_PER_SAMPLE = 2
"""Equal-time layers per output sample: the layer two-way time is dt_ms / 2."""
ORMSBY_CORNERS_PER_HZ = (0.2, 0.4, 1.6, 2.4)
"""Ormsby corners as multiples of ``frequency_hz`` (25 Hz -> 5-10-40-60 Hz)."""


@dataclass(frozen=True)
class ModelledSection:
    """A synthetic section with the true times and reflection coefficients of its surfaces."""

    section: Section
    """The data, float32 (n_traces, n_samples)."""
    seafloor_twt_ms: np.ndarray
    """(n_traces,) primary seafloor time, ms."""
    surface_twt_ms: dict[str, np.ndarray]
    """Primary two-way time of every unit top and overprint by name, (n_traces,), NaN where absent."""
    reflection_coefficient: dict[str, np.ndarray]
    """Signed R at each named surface per trace (positive = impedance increase downward)."""
    seafloor_reflection_coefficient: np.ndarray
    """(n_traces,)."""


def _wavelet(kind: str, frequency_hz: float, dt_ms: float) -> np.ndarray:
    if kind == "ricker":
        return ricker(frequency_hz, dt_ms)
    if kind == "ormsby":
        return ormsby(*(factor * frequency_hz for factor in ORMSBY_CORNERS_PER_HZ), dt_ms)
    raise ValueError(f"wavelet must be 'ricker' or 'ormsby', not {kind!r}")


def model_section(
    earth: EarthModel,
    *,
    dt_ms: float = 4.0,
    n_samples: int = 1000,
    wavelet: str = "ricker",
    frequency_hz: float = 25.0,
    snr: float | None = None,
    polarity: int = 1,
    multiples: bool = True,
    seed: int = 0,
    name: str = "model",
) -> ModelledSection:
    """Zero-offset section with every multiple, from the equal-time layered-earth recursion
    (Goupillaud 1961; free surface R = -1) per trace, convolved with the wavelet.

    Parameters
    ----------
    earth : EarthModel
    dt_ms : float
        Output sample interval, ms; the recursion runs on layers of ``dt_ms / 2``.
    n_samples : int
        Output samples per trace; the first is at 0 ms.
    wavelet : str
        ``ricker`` (peak ``frequency_hz``) or ``ormsby`` (corners 0.2/0.4/1.6/2.4 x ``frequency_hz``).
    frequency_hz : float
    snr : float, optional
        Ratio of signal RMS (measured on the samples at and below the seafloor) to
        band-limited noise RMS; None = no noise.
    polarity : int
        +1: a positive R (hard seafloor) is a positive number; -1 flips the whole section.
    multiples : bool
        False gives primaries only (each with its two-way transmission loss), for controls.
    seed : int
        Seed of the noise generator.
    name : str
        Section name.

    Returns
    -------
    ModelledSection
    """
    if polarity not in (1, -1):
        raise ValueError("polarity must be +1 or -1")
    layer_time_ms = dt_ms / LAYERS_PER_SAMPLE
    fine_wavelet = _wavelet(wavelet, frequency_hz, layer_time_ms)
    half_wavelet = len(fine_wavelet) // 2
    n_layers = n_samples * LAYERS_PER_SAMPLE + half_wavelet  # run past the record so late events' tails are present
    total_time_ms = n_layers * layer_time_ms

    seafloor_depth_m = np.asarray(earth.seafloor_depth_m, dtype=float)
    seafloor_twt_ms_min = 2000.0 * float(np.min(seafloor_depth_m)) / earth.water_velocity_m_s
    fastest_m_s = max(
        [float(np.max(np.asarray(unit.velocity_m_s, dtype=float))) for unit in earth.units]
        + [earth.water_velocity_m_s]
    ) + sum(max(overprint.velocity_change_m_s, 0.0) for overprint in earth.overprints)
    max_depth_m = float(np.max(seafloor_depth_m)) + fastest_m_s * max(total_time_ms - seafloor_twt_ms_min, 0.0) / 2000.0
    grid = depth_grid(earth, max_depth_m + 10.0 * DEPTH_STEP_M)

    impedance = impedance_in_time(grid, layer_time_ms, n_layers + 1)
    # Interface k (k = 1..n_layers) lies between layer k-1 and layer k, at two-way time k * layer_time_ms.
    reflection = (impedance[:, 1:] - impedance[:, :-1]) / (impedance[:, 1:] + impedance[:, :-1])  # R = (Z2 - Z1)/(Z2 + Z1)
    if multiples:
        response = layered_response(reflection, surface_coefficient=-1.0, n_out=n_layers)
    else:
        response = primary_response(reflection, n_out=n_layers)
    fine = convolve_traces(response, fine_wavelet)
    signal = fine[:, : n_samples * LAYERS_PER_SAMPLE : LAYERS_PER_SAMPLE]

    seafloor_twt_ms = grid.twt_at_depth_ms(seafloor_depth_m)
    if snr is not None:
        time_ms = dt_ms * np.arange(n_samples)
        below_seafloor = time_ms[np.newaxis, :] >= seafloor_twt_ms[:, np.newaxis]
        signal = add_noise(signal, float(snr), _wavelet(wavelet, frequency_hz, dt_ms), seed, below_seafloor)
    data = (polarity * signal).astype(np.float32)

    surface_twt_ms: dict[str, np.ndarray] = {}
    coefficients: dict[str, np.ndarray] = {}
    tops = unit_tops_m(earth)
    for index, unit in enumerate(earth.units):
        top = tops[index].copy()
        if index + 1 < len(earth.units):
            top[tops[index + 1] <= top] = np.nan  # pinched out: the unit is absent here
        surface_twt_ms[unit.name] = grid.twt_at_depth_ms(top)
        coefficients[unit.name] = grid.reflection_coefficient_at(top)
    names = [unit.name for unit in earth.units]
    rows = np.arange(earth.n_traces)
    for overprint in earth.overprints:
        depth = np.asarray(overprint.depth_m, dtype=float).copy()
        depth[depth <= seafloor_depth_m] = np.nan
        if overprint.kind == "gas" and overprint.units:
            wanted = [names.index(unit_name) for unit_name in overprint.units]
            inside = np.isin(grid.unit_index[rows, grid.node_below(depth)], wanted)
            above = np.isin(grid.unit_index[rows, grid.node_below(depth) - 1], wanted)
            depth[~(inside & above)] = np.nan  # a contact exists only inside its reservoir
        surface_twt_ms[overprint.name] = grid.twt_at_depth_ms(depth)
        coefficients[overprint.name] = grid.reflection_coefficient_at(depth)

    section = Section(
        data=data,
        dt_ms=float(dt_ms),
        t0_ms=0.0,
        trace_spacing_m=float(earth.trace_spacing_m),
        trace_numbers=np.arange(1, earth.n_traces + 1),
        inline_number=None,
        name=name,
    )
    return ModelledSection(
        section=section,
        seafloor_twt_ms=seafloor_twt_ms,
        surface_twt_ms=surface_twt_ms,
        reflection_coefficient=coefficients,
        seafloor_reflection_coefficient=grid.reflection_coefficient_at(seafloor_depth_m),
    )
