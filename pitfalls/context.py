"""What several detectors measure against, computed once per panel by the engine.

The engine builds one :class:`Context` for every panel it reads (a 2-D line, or one inline of
a volume) and hands it to every detector as ``detect(block, context, picks, rules)``. The
seafloor is picked once per trace for the whole scan, here, and nowhere else; the dominant
frequency, the structure-tensor dip and coherence field, the envelope and the seafloor-multiple
prediction are each computed once, not once per detector. Detectors stay pure functions of
their inputs: the context is a frozen record, and the engine, never a detector, builds it.

The dip field and the envelope are the expensive parts; they are computed on first use (at
most once per panel), so a scan with ``--only pick_consistency`` never pays for them.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import Any, Mapping

import numpy as np

from pitfalls.model import Picks, Section
from pitfalls.physics.dip import DipField, structure_tensor_dip
from pitfalls.physics.envelope import envelope
from pitfalls.physics.multiples import peak_amplitude, seafloor_dip_angle_deg, seafloor_multiple_band_twt_ms
from pitfalls.physics.seafloor import Seafloor, dominant_frequency_hz, find_seafloor
from pitfalls.physics.velocity import VelocityModel


@dataclass(frozen=True)
class SeafloorMultiple:
    """The predicted n-bounce seafloor event on every trace: the band between the dipping-plane
    (unmigrated) and the same-trace prediction."""

    multiplier: int
    """n: 2 is the first multiple, 3 the second."""
    low_twt_ms: np.ndarray
    """Earliest predicted time per trace, shape (n_traces,)."""
    high_twt_ms: np.ndarray
    """Latest predicted time per trace, shape (n_traces,)."""


@dataclass(frozen=True)
class Context:
    """Shared measurements of one panel. Built by :func:`build_context`; never changed."""

    block: Section
    """The panel these measurements belong to."""
    seafloor: Seafloor
    """The seafloor every check measures against: the seafloor pick, gaps filled automatically."""
    seafloor_filled_twt_ms: np.ndarray
    """Seafloor time on every trace, gaps interpolated; the first sample's time where none was found."""
    seafloor_peak_amplitude: np.ndarray
    """Parabola-refined signed seafloor amplitude within ``seafloor.snap_ms`` of the seafloor time."""
    dominant_frequency_hz: float
    """Peak of the amplitude spectrum below the seafloor; NaN for a panel without live data."""
    seafloor_dip_deg: np.ndarray
    """Seafloor dip angle per trace from its time-dip, degrees (NaN where unknown)."""
    seafloor_multiples: tuple[SeafloorMultiple, ...]
    """Predicted seafloor multiples for n = 2 .. ``multiples.highest_multiplier``."""
    velocity: VelocityModel
    """The velocity function for every depth in the scan."""
    dip_gradient_sigma_samples: float
    dip_window_sigma_samples: float

    @property
    def polarity(self) -> int:
        """+1 / -1: the sign of the seafloor reflection in this data; 0 when unknown."""
        return self.seafloor.polarity

    @cached_property
    def live_data(self) -> np.ndarray:
        """The panel's amplitudes with NaN (missing traces) as 0, shape (n_traces, n_samples)."""
        return np.nan_to_num(self.block.data, nan=0.0)

    @cached_property
    def dip(self) -> DipField:
        """Gradient structure-tensor dip, coherence and linearity at every sample of the panel."""
        return structure_tensor_dip(self.block.data, self.dip_gradient_sigma_samples, self.dip_window_sigma_samples)

    @cached_property
    def envelope(self) -> np.ndarray:
        """Envelope (magnitude of the analytic signal, Hilbert transform along time) of every trace."""
        return envelope(self.live_data, axis=1)


def build_context(block: Section, picks: Picks, rules: Mapping[str, Any],
                  velocity: VelocityModel | None = None, *, seafloor: Seafloor | None = None,
                  seafloor_across_ms_per_m: np.ndarray | None = None) -> Context:
    """Measure once what the detectors share, for one panel.

    Parameters
    ----------
    block : Section
        The panel (a 2-D line or one inline).
    picks : Picks
        The panel's picks; a pick of kind ``seafloor`` is the seafloor where it has a time.
    rules : mapping
        The validated rules (sections ``seafloor``, ``multiples`` and ``contacts`` are read).
    velocity : VelocityModel, optional
        Defaults to the rules' velocity function.
    seafloor : Seafloor, optional
        The panel's seafloor when the engine has already picked it (it picks a volume's inlines
        together, to measure the dip across them); picked here otherwise.
    seafloor_across_ms_per_m : ndarray of shape (n_traces,), optional
        On an inline of a volume, the gradient of the seafloor time across the inlines; with it the
        multiple prediction uses the seafloor's true dip (both directions), not only its dip along
        the inline. NaN entries count as no dip across.
    """
    velocity = VelocityModel.from_rules(rules) if velocity is None else velocity
    seafloor = find_seafloor(block, picks, rules) if seafloor is None else seafloor
    snap_ms = float(rules["seafloor"]["snap_ms"])
    peak, _ = peak_amplitude(np.nan_to_num(block.data, nan=0.0), block.t0_ms, block.dt_ms, seafloor.twt_ms, snap_ms)
    multiples = rules["multiples"]
    dip_deg = seafloor_dip_angle_deg(seafloor.twt_ms, block.trace_spacing_m, velocity.water_velocity_m_s,
                                     int(multiples["dip_smoothing_traces"]), across_ms_per_m=seafloor_across_ms_per_m)
    predicted = tuple(SeafloorMultiple(n, *seafloor_multiple_band_twt_ms(seafloor.twt_ms, dip_deg, n))
                      for n in range(2, int(multiples["highest_multiplier"]) + 1))
    return Context(
        block=block, seafloor=seafloor, seafloor_filled_twt_ms=filled_seafloor(seafloor.twt_ms, block.t0_ms),
        seafloor_peak_amplitude=peak, dominant_frequency_hz=dominant_frequency_hz(block, seafloor.twt_ms),
        seafloor_dip_deg=dip_deg, seafloor_multiples=predicted, velocity=velocity,
        dip_gradient_sigma_samples=float(rules["contacts"]["gradient_sigma_samples"]),
        dip_window_sigma_samples=float(rules["contacts"]["window_sigma_samples"]),
    )


def filled_seafloor(seafloor_twt_ms: np.ndarray, t0_ms: float) -> np.ndarray:
    """Seafloor time on every trace: gaps interpolated; the first sample's time where none was found."""
    found = np.isfinite(seafloor_twt_ms)
    if not found.any():
        return np.full(seafloor_twt_ms.shape, float(t0_ms))
    positions = np.arange(seafloor_twt_ms.size)
    return np.interp(positions, positions[found], seafloor_twt_ms[found])
