"""Load the rules: the packaged defaults merged with an optional user file, every value checked.

The defaults ship inside the package (``pitfalls/data/default_rules.yaml``, read with
:mod:`importlib.resources`, so any install finds them); ``rules/default.yaml`` at the top of
the repository is the user-facing copy of the same bytes.

The rules file is YAML read with the project's safe loader, :func:`pitfalls.io.yaml_safe.read_yaml`
(``yaml.safe_load`` without anchors, aliases or duplicate keys, size-capped).
Its top level holds sections: the core sections of :data:`CORE_KEYS` and one section per
detector, named after the detector's ``NAME`` and described by its ``RULE_KEYS``. Each key
is described by ``(type, minimum, maximum)``; a bound of None means unbounded.

Checks, for the defaults and the user file alike:

- the file exists, is at most 256 KiB of UTF-8 text and YAML without anchors, aliases or
  duplicate keys (the error names the line);
- the top level and each section are mappings (an empty section is allowed in a user file);
- every section and key is known (the error gives the dotted path and the closest valid key);
- every value has the right type: a whole number is accepted where a float is expected,
  ``true``/``false`` are never numbers, quoted text is never a number; a float is never
  accepted where a whole number is expected;
- numbers are finite and inside ``[minimum, maximum]``;
- the ranking weights are not all zero (the score divides by their sum).

The defaults must also hold every key; a user file overrides any subset. Float keys come
back as ``float`` even when written as whole numbers. The defaults are never changed: each
call returns a fresh dict.
"""
from __future__ import annotations

import copy
import difflib
import hashlib
import importlib.resources
import math
import pathlib
from typing import Any, Mapping

import yaml

from pitfalls.errors import PitfallsInputError
from pitfalls.io.yaml_safe import parse_yaml, read_yaml

KeySpec = tuple  # (type, minimum or None, maximum or None)

MAX_RULES_BYTES = 256 * 1024
"""A rules file larger than this is refused unread (the shipped defaults are about 20 KiB)."""

CORE_KEYS: dict[str, dict[str, tuple[type, float | None, float | None]]] = {
    "velocity": {
        # Sound speed in water: about 1400 m/s in cold fresh water to about 1550 m/s in warm
        # salt water (Mackenzie 1981 sound-speed equation); a margin either side.
        "water_velocity_m_s": (float, 1400.0, 1600.0),
        # Unconsolidated mud near 1450 m/s up to cemented carbonate seafloors (common practice).
        "seafloor_velocity_m_s": (float, 1400.0, 4000.0),
        # 0 gives a constant sediment velocity; Hamilton (1979) gradients stay below a few /s.
        "gradient_per_s": (float, 0.0, 5.0),
        # Up to crystalline basement and salt-free carbonate velocities (common practice).
        "max_velocity_m_s": (float, 1400.0, 7000.0),
    },
    "section": {
        # Post-stack bins lie between a few metres (site surveys) and 100 m (regional 2-D).
        "fallback_trace_spacing_m": (float, 1.0, 500.0),
    },
    "seafloor": {
        # Up to the longest records (common practice: deep-water records rarely exceed 20 s).
        "search_max_ms": (float, 100.0, 30000.0),
        # A fraction of the trace's strongest envelope; 0 would take the first noise sample.
        "onset_fraction": (float, 0.01, 1.0),
        "lobe_window_ms": (float, 1.0, 500.0),
        "late_start_ms": (float, 0.0, 10000.0),
        "continuity_traces": (int, 1, 1001),
        "max_jump_ms": (float, 0.1, 1000.0),
        "snap_ms": (float, 0.0, 100.0),
    },
    "ranking": {
        # Relative weights of the score; only their ratios matter.
        "weight_severity": (float, 0.0, 1.0),
        "weight_confidence": (float, 0.0, 1.0),
        "weight_extent": (float, 0.0, 1.0),
        # Score factor for each earlier-ranked finding on the same horizon.
        "repeat_factor": (float, 0.0, 1.0),
        # Findings their detector rates below this confidence are not reported.
        "min_confidence": (float, 0.0, 1.0),
    },
    "maps": {
        "min_boundary_inlines": (int, 1, 100000),
        "inline_extent_share": (float, 0.05, 1.0),
        "conformable_max_residual_share": (float, 0.0, 1.0),
        "conformable_min_relief_m": (float, 0.0, 10000.0),
    },
    "describe": {
        # `pitfalls describe` (see pitfalls/describe.py); lengths in dominant periods.
        "guard_periods": (float, 0.0, 5.0),
        "termination_guard_periods": (float, 0.0, 10.0),
        "termination_band_periods": (float, 0.25, 20.0),
        "min_coherence": (float, 0.0, 1.0),
        "point_fraction": (float, 0.0, 10.0),
        "window_traces": (int, 5, 100000),
        "reflection_free_max_rms": (float, 0.0, 10.0),
        "chaotic_max_share": (float, 0.0, 1.0),
        "divergent_min_fan_deg": (float, 0.0, 90.0),
        "divergent_min_thickening": (float, 0.0, 10.0),
        "parallel_max_spread_deg": (float, 0.0, 90.0),
        "thickening_min_fraction": (float, 0.0, 10.0),
        "concordant_max_deg": (float, 0.0, 90.0),
        "flat_max_deg": (float, 0.0, 90.0),
        "toplap_max_ratio": (float, 0.0, 1.0),
        "pick_window_ms": (float, 8.0, 2000.0),
        "gradient_sigma_samples": (float, 0.3, 10.0),
        "window_sigma_samples": (float, 0.5, 30.0),
    },
}

_TYPE_WORDS = {float: "a number", int: "a whole number", bool: "true or false", str: "text"}


BUILT_IN = "built-in defaults"
"""How reports name the packaged defaults (never by their path inside the installation)."""


def default_rules_bytes() -> bytes:
    """The packaged defaults file, byte for byte (``pitfalls/data/default_rules.yaml``)."""
    return importlib.resources.files("pitfalls").joinpath("data", "default_rules.yaml").read_bytes()


def load_rules(path: str | None, detector_keys: Mapping[str, Mapping[str, KeySpec]],
               defaults_path: str | pathlib.Path | None = None) -> tuple[dict, str, str]:
    """Defaults merged with the user's rules file, every value checked.

    Parameters
    ----------
    path : str or None
        The user's rules file; None to use the defaults alone.
    detector_keys : Mapping
        Detector ``NAME`` -> its ``RULE_KEYS`` (key -> ``(type, minimum, maximum)``).
    defaults_path : str or pathlib.Path, optional
        A defaults file; the packaged defaults (:func:`default_rules_bytes`) when not given.

    Returns
    -------
    rules : dict
        A fresh nested dict: section -> key -> value.
    used_path : str
        The user's file as given, :data:`BUILT_IN` for the packaged defaults, or
        ``defaults_path`` as given.
    sha256 : str
        Hex SHA-256 of the bytes of ``used_path``.

    Raises
    ------
    PitfallsInputError
        For an unreadable or invalid file (the defaults included), naming the file, the
        line or the dotted key, and the fix.
    """
    clash = set(CORE_KEYS) & set(detector_keys)
    if clash:
        raise ValueError(f"detector names clash with core rules sections: {sorted(clash)}")
    schema: dict[str, Mapping[str, KeySpec]] = {**CORE_KEYS, **detector_keys}
    if defaults_path is None:
        defaults_file = BUILT_IN
        default_bytes = default_rules_bytes()
        default_document = parse_yaml(default_bytes.decode("utf-8"), defaults_file, what="rules file",
                                      fix=lambda fix: _default_fix(True, fix))
    else:
        defaults_file = str(defaults_path)
        default_bytes, default_document = _read_yaml(defaults_file, is_default=True)
    rules = _checked(defaults_file, default_document, schema, is_default=True)
    _check_combinations(defaults_file, rules, is_default=True)
    if path is None:
        return rules, defaults_file, hashlib.sha256(default_bytes).hexdigest()
    path = str(path)
    user_bytes, user_document = _read_yaml(path, is_default=False)
    overrides = _checked(path, user_document, schema, is_default=False)
    for section, values in overrides.items():
        rules[section].update(values)
    _check_combinations(path, rules, is_default=False)
    return rules, path, hashlib.sha256(user_bytes).hexdigest()


def render_rules(rules: Mapping[str, Any]) -> str:
    """The rules as YAML text, sections and keys in their stored order."""
    plain = {section: dict(values) for section, values in rules.items()}
    return yaml.safe_dump(plain, sort_keys=False, default_flow_style=False, allow_unicode=True)


# --- reading ----------------------------------------------------------------------------
def _default_fix(is_default: bool, fix: str) -> str:
    if is_default:
        return f"the shipped defaults are damaged: reinstall pitfalls ({fix})"
    return fix


def _read_yaml(path: str, is_default: bool) -> tuple[bytes, Any]:
    return read_yaml(path, what="rules file", max_bytes=MAX_RULES_BYTES,
                     fix=lambda fix: _default_fix(is_default, fix))


# --- checking ---------------------------------------------------------------------------
def _suggestion(name: str, schema: Mapping[str, Mapping[str, KeySpec]], section: str | None) -> str:
    """A 'did you mean' hint: the closest key in the section, or the same key elsewhere."""
    if section is None:
        homes = [f"{other}.{name}" for other, keys in schema.items() if name in keys]
        if homes:
            return f"this key belongs under a section: write it as {homes[0]}"
        close = difflib.get_close_matches(name, list(schema), n=1, cutoff=0.6)
        if close:
            return f"did you mean '{close[0]}'?"
        return f"valid sections are {', '.join(schema)}"
    keys = schema[section]
    close = difflib.get_close_matches(name, list(keys), n=1, cutoff=0.6)
    if close:
        return f"did you mean {section}.{close[0]}?"
    homes = [f"{other}.{name}" for other, other_keys in schema.items() if name in other_keys]
    if homes:
        return f"this key belongs in another section: {homes[0]}"
    return f"valid keys in {section} are {', '.join(keys)}"


def _shown(value: Any) -> str:
    text = repr(value) if isinstance(value, str) else str(value)
    if isinstance(value, bool):
        text = "true" if value else "false"
    if len(text) > 40:
        text = text[:37] + "..."
    return text


def _bounds(minimum: float | None, maximum: float | None) -> str:
    if minimum is not None and maximum is not None:
        return f"from {minimum:g} to {maximum:g}"
    if minimum is not None:
        return f"of at least {minimum:g}"
    return f"of at most {maximum:g}"


def _checked_value(path: str, dotted: str, value: Any, spec: KeySpec, is_default: bool) -> Any:
    kind, minimum, maximum = spec
    word = _TYPE_WORDS.get(kind, kind.__name__)
    range_hint = f" {_bounds(minimum, maximum)}" if (minimum is not None or maximum is not None) else ""
    if kind is float:
        ok = isinstance(value, (int, float)) and not isinstance(value, bool)
    elif kind is int:
        ok = isinstance(value, int) and not isinstance(value, bool)
    else:
        ok = isinstance(value, kind)
    if not ok:
        if value is None:
            problem = f"has no value, but it must be {word}"
        else:
            problem = f"is {_shown(value)} ({_describe(value)}), but it must be {word}"
        if kind in (float, int):
            fix = f"write {word}{range_hint}, without quotes"
            if isinstance(value, str) and _reads_as_number(value):
                if "e" in value.lower():
                    fix = (f"YAML reads {value.strip()} as text; write {word}{range_hint}, with an exponent "
                           "written with a point and a sign (1.0e+3, not 1e3)")
                else:
                    fix = f"remove the quotes around {value.strip()}; write {word}{range_hint}"
        elif kind is bool:
            fix = "write true or false"
        else:
            fix = f"write {word}"
        raise PitfallsInputError(path, dotted, problem, fix=_default_fix(is_default, fix))
    if kind in (float, int):
        if isinstance(value, float) and not math.isfinite(value):
            raise PitfallsInputError(path, dotted, f"is {_shown(value)}, not a finite number",
                                     fix=_default_fix(is_default, f"write {word}{range_hint}"))
        if (minimum is not None and value < minimum) or (maximum is not None and value > maximum):
            raise PitfallsInputError(path, dotted, f"is {_shown(value)}, outside the allowed range{range_hint}",
                                     fix=_default_fix(is_default, f"choose a value{range_hint}"))
        if kind is float:
            try:
                return float(value)
            except OverflowError as err:
                raise PitfallsInputError(path, dotted, f"is {_shown(value)}, too large for a number",
                                         fix=_default_fix(is_default, f"write {word}{range_hint}")) from err
    return value


def _reads_as_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _describe(value: Any) -> str:
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, str):
        return "text"
    if isinstance(value, float):
        return "a decimal number"
    if isinstance(value, int):
        return "a whole number"
    if isinstance(value, dict):
        return "a section"
    if isinstance(value, list):
        return "a list"
    return type(value).__name__


def _checked(path: str, document: Any, schema: Mapping[str, Mapping[str, KeySpec]],
             is_default: bool) -> dict[str, dict[str, Any]]:
    """The document's values, checked and with float keys as floats."""
    if document is None:
        if is_default:
            raise PitfallsInputError(path, "", "the defaults file is empty",
                                     fix=_default_fix(is_default, "it must hold every rules section"))
        return {}
    if not isinstance(document, dict):
        raise PitfallsInputError(path, "", f"the top level is {_describe(document)}, not sections of keys",
                                 fix=_default_fix(is_default, "write sections such as 'velocity:' with "
                                                  "'key: value' lines indented under them"))
    result: dict[str, dict[str, Any]] = {}
    for section, values in document.items():
        name = str(section)
        if not isinstance(section, str) or section not in schema:
            raise PitfallsInputError(path, name, f"unknown section '{name}'",
                                     fix=_default_fix(is_default, _suggestion(name, schema, None)))
        if values is None and not is_default:
            result[section] = {}
            continue
        if not isinstance(values, dict):
            raise PitfallsInputError(path, section, f"is {_describe(values)}, not a section of keys",
                                     fix=_default_fix(is_default, f"indent 'key: value' lines under '{section}:'"))
        keys = schema[section]
        checked: dict[str, Any] = {}
        for key, value in values.items():
            key_name = str(key)
            dotted = f"{section}.{key_name}"
            if not isinstance(key, str) or key not in keys:
                raise PitfallsInputError(path, dotted, "unknown key",
                                         fix=_default_fix(is_default, _suggestion(key_name, schema, section)))
            checked[key] = _checked_value(path, dotted, value, tuple(keys[key]), is_default)
        result[section] = checked
    if is_default:
        for section, keys in schema.items():
            for key in keys:
                if key not in result.get(section, {}):
                    raise PitfallsInputError(path, f"{section}.{key}", "missing from the defaults",
                                             fix=_default_fix(is_default, "every rules key needs a default"))
    return copy.deepcopy(result)


def _check_combinations(path: str, rules: Mapping[str, Mapping[str, Any]], is_default: bool) -> None:
    """Checks that involve more than one key."""
    ranking = rules.get("ranking", {})
    weights = [name for name in CORE_KEYS["ranking"] if name.startswith("weight_") and name in ranking]
    if weights and sum(ranking[name] for name in weights) <= 0.0:
        raise PitfallsInputError(path, "ranking", "all ranking weights are zero, so no finding could be scored",
                                 fix=_default_fix(is_default, "give at least one weight a value above 0"))


def load_rules_mapping(overrides: Mapping[str, Any], detector_keys: Mapping[str, Mapping[str, KeySpec]],
                       label: str = "rules mapping",
                       defaults_path: str | pathlib.Path | None = None) -> tuple[dict, str, str]:
    """Defaults merged with overrides given as a nested mapping instead of a file.

    The overrides pass the same checks as a user rules file. A top-level key may also be a
    dotted ``section.key``. ``label`` stands for the file name in messages and reports; the
    checksum is the SHA-256 of the checked overrides written as YAML by :func:`render_rules`,
    so a file holding that text gives the same checksum.

    Raises
    ------
    PitfallsInputError
        Naming ``label`` and the dotted key, as for a rules file.
    """
    rules, _, _ = load_rules(None, detector_keys, defaults_path)
    schema: dict[str, Mapping[str, KeySpec]] = {**CORE_KEYS, **detector_keys}
    if not isinstance(overrides, Mapping):
        raise PitfallsInputError(label, "", f"is {_describe(overrides)}, not a mapping of rules sections",
                                 fix="give a dict such as {'velocity': {'water_velocity_m_s': 1480.0}}, a rules "
                                     "file path, or None for the defaults")
    document: dict[str, Any] = {}
    for name, values in overrides.items():
        section, dot, key = str(name).partition(".") if isinstance(name, str) else (name, "", "")
        if dot:
            target = document.setdefault(section, {})
            if not isinstance(target, dict):
                raise PitfallsInputError(label, str(name), f"section '{section}' is given twice, once whole and "
                                         "once as a dotted key", fix="give each section one way")
            target[key] = _plain_value(values)
        elif section in document:
            raise PitfallsInputError(label, str(name), f"section '{section}' is given twice, once whole and "
                                     "once as a dotted key", fix="give each section one way")
        else:
            document[section] = _plain_value(values)
    checked = _checked(label, document, schema, is_default=False)
    for section, values in checked.items():
        rules[section].update(values)
    _check_combinations(label, rules, is_default=False)
    text = render_rules({section: values for section, values in checked.items()})
    return rules, label, hashlib.sha256(text.encode("utf-8")).hexdigest()


def _plain_value(value: Any) -> Any:
    """Mappings as dicts and numpy scalars as Python numbers, so they are checked like YAML values."""
    if isinstance(value, Mapping):
        return {key: _plain_value(item) for key, item in value.items()}
    if type(value).__module__ == "numpy" and hasattr(value, "item"):
        return value.item()
    return value
