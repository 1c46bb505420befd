"""Read a velocity file (``--velocity FILE``): the water velocity and the sediment function below the seafloor.

Two forms are read.

A YAML file (``.yaml`` or ``.yml``), read with the safe YAML loader::

    water_velocity_m_s: 1485.0           # optional: the rules' value when left out
    sediment:                            # a linear function ...
      seafloor_velocity_m_s: 1620.0
      gradient_per_s: 0.7
      max_velocity_m_s: 4200.0           # optional: the rules' value when left out
    # ... or a table of two-way time below the seafloor against velocity:
    # sediment:
    #   twt_below_seafloor_ms: [0, 250, 600, 1200]
    #   interval_velocity_m_s: [1580, 1750, 2050, 2600]     # or average_velocity_m_s
    lines:                               # optional: per line, by the SEG-Y file's name without extension
      QT24-117:
        sediment: {seafloor_velocity_m_s: 1580.0, gradient_per_s: 0.9}

A line's entry overrides the survey-wide keys for that line; a line with no entry uses them.

Any other file is a two-column table: a header row naming the columns, then one row per
knot, with the pick files' delimiters (comma, semicolon, tab or spaces) and ``#`` comment or
free-text lines before the header skipped. The first column is ``twt_below_seafloor_ms`` (or
``twt_below_seafloor_s``), the second ``interval_velocity_m_s`` or ``average_velocity_m_s``;
the water velocity is the rules'. Times are measured from the seafloor because the water
layer above it changes along a line: a function hung from the sea surface would put a
different column of rock under every trace.

Every problem is a one-line :class:`PitfallsInputError` naming the file, the key or row, and
the fix.
"""
from __future__ import annotations

import math
import os
from typing import Any, Mapping

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import delimiter_of
from pitfalls.io.rules import CORE_KEYS
from pitfalls.io.yaml_safe import read_yaml
from pitfalls.physics.velocity import VelocityModel

TABLE_VELOCITY_RANGE_M_S = (1000.0, 7000.0)
"""Interval or average velocities in a table must lie in this range: gas-charged mud near
1100 m/s up to crystalline basement (common practice)."""
TABLE_TIME_LIMIT_MS = 20000.0
"""Knots deeper than 20 s below the seafloor are beyond any record (common practice)."""
_TIME_NAMES = {"twt_below_seafloor_ms": 1.0, "twt_below_seafloor_s": 1000.0}
_VELOCITY_NAMES = {"interval_velocity_m_s": "interval", "average_velocity_m_s": "average"}
_LINEAR_KEYS = ("seafloor_velocity_m_s", "gradient_per_s", "max_velocity_m_s")
_TOP_KEYS = ("water_velocity_m_s", "sediment", "lines")


def read_velocity_file(path: str, rules: Mapping[str, Any], line_name: str | None = None) -> VelocityModel:
    """The velocity function a file gives for one line (or the survey).

    Parameters
    ----------
    path : str
        The velocity file.
    rules : mapping
        The merged rules: the ``velocity`` section fills in what the file leaves out.
    line_name : str, optional
        The line's name (the SEG-Y file's name without extension), to pick its entry under
        ``lines``.

    Raises
    ------
    PitfallsInputError
        For anything the module notes call an error.
    """
    path = str(path)
    if os.path.splitext(path)[1].lower() in (".yaml", ".yml"):
        _, document = read_yaml(path, what="velocity file")
        return _from_yaml(path, document, rules, line_name)
    return _from_table(path, rules)


# --- YAML -----------------------------------------------------------------------------------
def _from_yaml(path: str, document: Any, rules: Mapping[str, Any], line_name: str | None) -> VelocityModel:
    if not isinstance(document, dict):
        raise PitfallsInputError(path, "", "the velocity file holds no settings",
                                 "write water_velocity_m_s and a sediment section (see the README, Velocity)")
    _known(path, "", document, _TOP_KEYS)
    settings = {key: value for key, value in document.items() if key != "lines"}
    source = path
    entry: dict = {}
    lines = document.get("lines")
    if lines is not None:
        if not isinstance(lines, dict) or not lines:
            raise PitfallsInputError(path, "lines", "must hold one entry per line name",
                                     "write lines: then one line name per row with its settings under it")
        if line_name is not None and str(line_name) in {str(key) for key in lines}:
            entry = next(value for key, value in lines.items() if str(key) == str(line_name))
            if not isinstance(entry, dict):
                raise PitfallsInputError(path, f"lines.{line_name}", "must hold settings",
                                         "write water_velocity_m_s and/or a sediment section under the line name")
            _known(path, f"lines.{line_name}.", entry, _TOP_KEYS[:2])
            settings = {**settings, **entry}
            source = f"{path} (line {line_name})"
        elif "sediment" not in settings:
            names = ", ".join(sorted(str(key) for key in lines)[:8]) + (" ..." if len(lines) > 8 else "")
            raise PitfallsInputError(path, "lines", f"has no entry for line {line_name!r} (entries: {names}) "
                                                    "and the file has no survey-wide sediment section",
                                     "add an entry named after the SEG-Y file (without extension), or a "
                                     "survey-wide sediment section")
    if "sediment" not in settings:
        raise PitfallsInputError(path, "sediment", "is missing",
                                 "add a sediment section: seafloor_velocity_m_s and gradient_per_s, or "
                                 "twt_below_seafloor_ms with interval_velocity_m_s or average_velocity_m_s")
    where = "lines." + str(line_name) + "." if source != path else ""
    water = _water(path, where if "water_velocity_m_s" in entry else "", settings.get("water_velocity_m_s"), rules)
    sediment = settings["sediment"]
    if not isinstance(sediment, dict):
        raise PitfallsInputError(path, f"{where}sediment", "must hold settings, not a single value",
                                 "write seafloor_velocity_m_s and gradient_per_s, or twt_below_seafloor_ms with "
                                 "interval_velocity_m_s or average_velocity_m_s, under it")
    table_keys = [key for key in sediment if key in _TIME_NAMES or key in _VELOCITY_NAMES]
    linear_keys = [key for key in sediment if key in _LINEAR_KEYS]
    _known(path, f"{where}sediment.", sediment, tuple(_LINEAR_KEYS) + tuple(_TIME_NAMES) + tuple(_VELOCITY_NAMES))
    if table_keys and linear_keys:
        raise PitfallsInputError(path, f"{where}sediment", "mixes a linear function and a table",
                                 f"keep either {', '.join(linear_keys)} or {', '.join(table_keys)}")
    if table_keys:
        return _yaml_table(path, f"{where}sediment", sediment, water, source)
    return _yaml_linear(path, f"{where}sediment", sediment, water, rules, source)


def _known(path: str, prefix: str, mapping: dict, allowed: tuple[str, ...]) -> None:
    for key in mapping:
        if key not in allowed:
            raise PitfallsInputError(path, f"{prefix}{key}", "is not a velocity-file key",
                                     f"use {', '.join(allowed)}")


def _number(path: str, where: str, value: Any, low: float, high: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(float(value)):
        raise PitfallsInputError(path, where, f"is {str(value)[:40]!r}, not a number", f"write a number from {low:g} to {high:g}")
    if not low <= float(value) <= high:
        raise PitfallsInputError(path, where, f"is {float(value):g}, outside {low:g}-{high:g}",
                                 f"write a number from {low:g} to {high:g}")
    return float(value)


def _water(path: str, prefix: str, value: Any, rules: Mapping[str, Any]) -> float:
    if value is None:
        return float(rules["velocity"]["water_velocity_m_s"])
    _, low, high = CORE_KEYS["velocity"]["water_velocity_m_s"]
    return _number(path, f"{prefix}water_velocity_m_s", value, low, high)


def _yaml_linear(path: str, where: str, sediment: dict, water: float, rules: Mapping[str, Any],
                 source: str) -> VelocityModel:
    values = {}
    for key in _LINEAR_KEYS:
        if key not in sediment:
            if key == "max_velocity_m_s":
                values[key] = float(rules["velocity"][key])
                continue
            raise PitfallsInputError(path, f"{where}.{key}", "is missing",
                                     "a linear function needs seafloor_velocity_m_s and gradient_per_s")
        _, low, high = CORE_KEYS["velocity"][key]
        values[key] = _number(path, f"{where}.{key}", sediment[key], low, high)
    return VelocityModel(water_velocity_m_s=water, source=source, **values)


def _yaml_table(path: str, where: str, sediment: dict, water: float, source: str) -> VelocityModel:
    times = [key for key in sediment if key in _TIME_NAMES]
    speeds = [key for key in sediment if key in _VELOCITY_NAMES]
    if len(times) != 1 or len(speeds) != 1:
        raise PitfallsInputError(path, where, "a table needs one time list and one velocity list",
                                 "give twt_below_seafloor_ms (or _s) and one of interval_velocity_m_s, "
                                 "average_velocity_m_s")
    time_values, speed_values = sediment[times[0]], sediment[speeds[0]]
    for key, values in ((times[0], time_values), (speeds[0], speed_values)):
        if not isinstance(values, list) or not values:
            raise PitfallsInputError(path, f"{where}.{key}", "must be a list of numbers",
                                     "write the values as [a, b, c]")
    if len(time_values) != len(speed_values):
        raise PitfallsInputError(path, where, f"{times[0]} has {len(time_values)} values but {speeds[0]} has "
                                              f"{len(speed_values)}", "give one velocity per time")
    scale = _TIME_NAMES[times[0]]
    twt_ms = [_number(path, f"{where}.{times[0]}[{i + 1}]", value, 0.0, TABLE_TIME_LIMIT_MS / scale) * scale
              for i, value in enumerate(time_values)]
    velocity = [_number(path, f"{where}.{speeds[0]}[{i + 1}]", value, *TABLE_VELOCITY_RANGE_M_S)
                for i, value in enumerate(speed_values)]
    try:
        return VelocityModel.from_table(water, twt_ms, velocity, _VELOCITY_NAMES[speeds[0]], source)
    except ValueError as err:
        raise PitfallsInputError(path, where, str(err), "make the times increase and the depths with them") from None


# --- two-column table ---------------------------------------------------------------------
def _from_table(path: str, rules: Mapping[str, Any]) -> VelocityModel:
    try:
        with open(path, "rb") as handle:
            raw = handle.read(1 << 20)
    except FileNotFoundError:
        raise PitfallsInputError(path, "", "velocity file not found", "check the path and the file name") from None
    except IsADirectoryError:
        raise PitfallsInputError(path, "", "this is a folder, not a velocity file",
                                 "give the path of the velocity file") from None
    except OSError as err:
        raise PitfallsInputError(path, "", f"cannot be read ({err.strerror or err})",
                                 "check that you may read the file") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = raw[: err.start].count(b"\n") + 1
        raise PitfallsInputError(path, f"line {line}", f"byte {err.start} is not UTF-8 text",
                                 "save the velocity table as UTF-8 text") from None
    header_fix = ("start the table with a header row: twt_below_seafloor_ms,interval_velocity_m_s (or "
                  "average_velocity_m_s); times are two-way below the seafloor, or give a .yaml file")
    lines = text.splitlines()
    header_at = None
    for index, line in enumerate(lines):
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        cells = [cell.strip().lower() for cell in _cells(line)]
        if any(cell in ("twt_ms", "twt_s", "twt", "time") for cell in cells):
            raise PitfallsInputError(path, f"row {index + 1}", "the times are not marked as measured from the seafloor",
                                     "name the column twt_below_seafloor_ms and give times below the seafloor "
                                     "(the water layer is added from the water velocity)")
        if any(cell in _TIME_NAMES or cell in _VELOCITY_NAMES for cell in cells):
            header_at = index
            break
    if header_at is None:
        raise PitfallsInputError(path, "header", "no row names the columns", header_fix)
    header = [cell.strip().lower() for cell in _cells(lines[header_at])]
    if len(header) != 2 or header[0] not in _TIME_NAMES or header[1] not in _VELOCITY_NAMES:
        raise PitfallsInputError(path, f"row {header_at + 1}", f"the header is {', '.join(header)[:80]}", header_fix)
    twt_ms: list[float] = []
    velocity: list[float] = []
    scale = _TIME_NAMES[header[0]]
    for index in range(header_at + 1, len(lines)):
        stripped = lines[index].strip()
        if not stripped or stripped.startswith("#"):
            continue
        cells = _cells(lines[index])
        if len(cells) != 2:
            raise PitfallsInputError(path, f"row {index + 1}", f"the row has {len(cells)} cells, not 2",
                                     "give one time and one velocity per row")
        try:
            time_value, speed_value = float(cells[0]), float(cells[1])
        except ValueError:
            raise PitfallsInputError(path, f"row {index + 1}", "a cell is not a number",
                                     "write plain numbers with a decimal point") from None
        twt_ms.append(_number(path, f"row {index + 1}", time_value, 0.0, TABLE_TIME_LIMIT_MS / scale) * scale)
        velocity.append(_number(path, f"row {index + 1}", speed_value, *TABLE_VELOCITY_RANGE_M_S))
    if not twt_ms:
        raise PitfallsInputError(path, f"row {header_at + 1}", "the table has a header but no rows",
                                 "add one row per knot below the header")
    water = float(rules["velocity"]["water_velocity_m_s"])
    try:
        return VelocityModel.from_table(water, twt_ms, velocity, _VELOCITY_NAMES[header[1]], path)
    except ValueError as err:
        raise PitfallsInputError(path, "", str(err).replace("entry", "knot"),
                                 "make the times increase down the table, and the depths with them") from None


def _cells(line: str) -> list[str]:
    delimiter = delimiter_of(line)
    return line.split() if delimiter == " " else [cell.strip() for cell in line.split(delimiter)]
