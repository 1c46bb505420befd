"""Time structure that is only velocity: pull-down and push-up under seafloor relief.

A low in a time horizon under a seafloor canyon is often no structure at all: the slow water
that fills the canyon delays every reflection below it. A seafloor mound or ridge (sediment
or carbonate where there would be water) pushes the reflections below it up. Taken for
structure, a pull-down looks like a syncline and a push-up like a closure.

For each seafloor anomaly (seafloor relief that stands out from a running-median regional
seafloor ``regional_traces`` wide) the time anomaly it alone causes is predicted by the
vertical-ray relation ``dt = 2 dz (1/v_w - 1/v_s)`` (``pitfalls.physics.overburden``), with
``v_s`` the velocity model's sediment velocity over the relief. Each horizon picked under the
anomaly is bridged across it (a straight line through ``margin_traces``-wide shoulders is
removed from horizon and prediction alike) and compared with the prediction: a correlation of
at least ``min_correlation`` (shape) and a least-squares scale factor between
``min_scale_factor`` and ``max_scale_factor`` (magnitude) make an ``overburden.pull-down`` or
``overburden.push-up`` finding over the anomaly's traces. It is medium when the relief left
after subtracting the prediction is under ``residual_periods`` dominant periods (the whole
time structure there is velocity), and low when a real structure remains and the finding
says how much of the relief is overburden. Confidence = correlation x (1 - |ln b| / ln
max_scale_factor), b the scale factor: 1 for a perfect shape and size match.

Shallow low-velocity bodies (gas pockets, channel fills) are not predicted: the detector sees
only the seafloor. On a 3-D volume it works inline by inline on the surfaces.

References
----------
.. [1] Sheriff, R. E., and Geldart, L. P., 1995, Exploration Seismology, 2nd ed., Cambridge
       University Press. (velocity pull-up and push-down under near-surface anomalies; from memory)
"""
from __future__ import annotations

from typing import Any, Mapping

import numpy as np

from pitfalls.context import Context
from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics import overburden as physics
from pitfalls.physics.velocity import VelocityModel

NAME = "overburden"
FAMILY = "overburden"
KINDS = {
    "pull-down": (
        "The horizon sags in time where the seafloor is deeper (a canyon or channel), by about the delay the extra slow "
        "water predicts (vertical rays: dt = 2 dz (1/v_water - 1/v_sediment)).",
        "A pull-down looks like a syncline or a structural low in time but may be flat in depth; mapped as structure it "
        "moves spill points and closures, and a real high under it can be hidden.",
        "Compare the low with the seafloor above it; depth-convert with the water depth taken into account (or a "
        "velocity model that follows the seafloor) and see whether the low survives; check the evidence's depth relief left.",
    ),
    "push-up": (
        "The horizon rises in time where the seafloor is shallower (a mound, ridge or fast seafloor body), by about the "
        "advance the replaced water predicts.",
        "A push-up looks like an anticline or a closure in time and may be flat in depth: a closure drawn on it can be "
        "a dry hole.",
        "Compare the high with the seafloor above it; depth-convert with the water depth taken into account and see "
        "whether the closure survives; check the evidence's depth relief left and the implied sediment velocity.",
    ),
}
RULE_KEYS = {
    "regional_traces": (int, 3, 100001),
    "min_predicted_relief_ms": (float, 0.1, 1000.0),
    "margin_traces": (int, 2, 10000),
    "min_correlation": (float, 0.0, 1.0),
    "min_scale_factor": (float, 0.0, 1.0),
    "max_scale_factor": (float, 1.0, 100.0),
    "min_below_seafloor_ms": (float, 0.0, 10000.0),
    "residual_periods": (float, 0.0, 10.0),
}


def detect(block: Section, context: Context, picks: Picks, rules: Mapping[str, Any]) -> list[Finding]:
    """Pull-downs and push-ups on every picked horizon of one panel (seafloor, dominant frequency
    and velocity from the shared context)."""
    return find_overburden_effects(block, picks, context.seafloor.twt_ms, context.dominant_frequency_hz,
                                   context.velocity, rules[NAME])


def find_overburden_effects(section: Section, picks: Picks, seafloor_twt_ms: np.ndarray, frequency_hz: float,
                            velocity: VelocityModel, settings: Mapping[str, Any]) -> list[Finding]:
    """The detector's work once the seafloor, dominant frequency and velocity are known."""
    if np.count_nonzero(np.isfinite(seafloor_twt_ms)) < 3:
        return []
    period_ms = 1000.0 / frequency_hz if np.isfinite(frequency_hz) and frequency_hz > 0 else float("nan")
    water_m_s = velocity.water_velocity_m_s
    regional = physics.regional_seafloor_twt_ms(seafloor_twt_ms, int(settings["regional_traces"]))
    relief_m = water_m_s * np.nan_to_num(seafloor_twt_ms - regional, nan=0.0) / 2000.0
    # The sediment the relief replaced: the model's velocity averaged over the relief's depth below the seafloor.
    replacement_m_s = float(velocity.interval_velocity_m_s(np.max(np.abs(relief_m)) / 2.0))
    predicted = physics.seafloor_anomaly_ms(seafloor_twt_ms, regional, water_m_s, replacement_m_s)
    margin = int(settings["margin_traces"])
    windows = physics.anomaly_windows(predicted, float(settings["min_predicted_relief_ms"]), margin)
    findings: list[Finding] = []
    for horizon in picks.horizons:
        if horizon.kind == "seafloor" or horizon.n_points < 3:
            continue
        below = np.nanmedian(horizon.twt_ms - seafloor_twt_ms) if np.isfinite(horizon.twt_ms - seafloor_twt_ms).any() else np.nan
        if not np.isfinite(below) or below < settings["min_below_seafloor_ms"]:
            continue
        for window in windows:
            finding = _judge(section, horizon, seafloor_twt_ms, predicted, window, margin, period_ms, velocity,
                             replacement_m_s, settings)
            if finding is not None:
                findings.append(finding)
    return findings


def _judge(section: Section, horizon: Horizon, seafloor_twt_ms: np.ndarray, predicted: np.ndarray,
           window: tuple[int, int, int], margin: int, period_ms: float, velocity: VelocityModel,
           replacement_m_s: float, settings: Mapping[str, Any]) -> Finding | None:
    comparison = physics.compare_relief(horizon.twt_ms, predicted, window, margin)
    if comparison is None or comparison.correlation < settings["min_correlation"]:
        return None
    scale = comparison.scale_factor
    if not settings["min_scale_factor"] <= scale <= settings["max_scale_factor"]:
        return None
    first, last, sign = window
    kind = "pull-down" if sign > 0 else "push-up"
    stretch = slice(first, last + 1)
    twt = horizon.twt_ms[stretch]
    below_ms = np.nanmedian(twt - seafloor_twt_ms[stretch])
    sediment_depth_m = float(velocity.depth_below_seafloor_m(below_ms))
    average_m_s = sediment_depth_m / (below_ms / 2000.0) if below_ms > 0 else velocity.seafloor_velocity_m_s
    depth_left_m = comparison.corrected_relief_ms * average_m_s / 2000.0  # vertical-ray depth of the time relief left
    whole = np.isfinite(period_ms) and comparison.corrected_relief_ms < settings["residual_periods"] * period_ms
    closeness = 1.0 - min(1.0, abs(np.log(max(scale, 1e-9))) / np.log(settings["max_scale_factor"]))
    confidence = float(np.clip(comparison.correlation * closeness, 0.0, 1.0))
    first_number, last_number = int(section.trace_numbers[first]), int(section.trace_numbers[last])
    peak_number = int(section.trace_numbers[comparison.peak_index])
    if whole:
        title = (f"{horizon.name}: the {comparison.observed_relief_ms:.0f} ms {'low' if sign > 0 else 'high'} at traces "
                 f"{first_number}-{last_number} is the seafloor's {kind} (predicted {comparison.predicted_relief_ms:.0f} ms); "
                 f"{comparison.corrected_relief_ms:.0f} ms left after correcting it")
    else:
        title = (f"{horizon.name}: {comparison.predicted_relief_ms:.0f} ms of the {comparison.observed_relief_ms:.0f} ms "
                 f"{'low' if sign > 0 else 'high'} at traces {first_number}-{last_number} is the seafloor's {kind}; "
                 f"{comparison.corrected_relief_ms:.0f} ms (about {depth_left_m:.0f} m) is structure")
    times = twt[np.isfinite(twt)]
    return Finding(
        id=f"{FAMILY}.{kind}", detector=NAME, severity="medium" if whole else "low", confidence=confidence,
        title=title, advice=KINDS[kind][2], horizon=horizon.name, traces=(first_number, last_number),
        twt_ms=(float(times.min()), float(times.max())),
        evidence={
            "predicted_relief_ms": comparison.predicted_relief_ms,
            "observed_relief_ms": comparison.observed_relief_ms,
            "relief_left_ms": comparison.corrected_relief_ms,
            "relief_left_after_fit_ms": comparison.fitted_relief_ms,
            "depth_relief_left_m": depth_left_m,
            "scale_factor": scale,
            "correlation": comparison.correlation,
            "implied_sediment_velocity_m_s": physics.implied_replacement_velocity_m_s(
                scale, velocity.water_velocity_m_s, replacement_m_s),
            "assumed_sediment_velocity_m_s": replacement_m_s,
            "water_velocity_m_s": velocity.water_velocity_m_s,
            "anomaly_axis_trace": peak_number,
            "dominant_period_ms": period_ms,
            "n_traces": comparison.n_traces,
            "whole_relief_is_overburden": bool(whole),
        },
    )
