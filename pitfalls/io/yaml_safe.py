"""The one YAML reader for every YAML file the tool reads (rules, velocity, accepted findings, projects).

It is ``yaml.safe_load`` with the doors a small settings file never needs closed:

- **anchors and aliases** (``&name`` / ``*name``) are refused: a few hundred bytes of nested
  aliases expand to billions of nodes, and a settings file gains nothing from them;
- **duplicate keys** in one mapping are refused (YAML itself forbids them; ``safe_load`` would
  silently keep the last one, so a value the user wrote would be ignored without a word);
- the file's **size** is capped (``max_bytes``) and so is the **nesting depth**, so no file
  can make the reader run for minutes or exhaust memory or the stack;
- dates stay text as written (``2026-05-01`` is the string ``"2026-05-01"``), so every value
  can go into a JSON report as it is.

Every refusal is a :class:`~pitfalls.errors.PitfallsInputError` naming the file and, where
the parser knows it, the line. Usage::

    raw, document = read_yaml(path, what="rules file")
    document = parse_yaml(text, path, what="velocity file")
"""
from __future__ import annotations

import os
from typing import Any, Callable

import yaml
from yaml.composer import Composer
from yaml.constructor import SafeConstructor
from yaml.events import AliasEvent, CollectionStartEvent, ScalarEvent
from yaml.nodes import MappingNode
from yaml.parser import Parser
from yaml.reader import Reader
from yaml.resolver import Resolver
from yaml.scanner import Scanner

from pitfalls.errors import PitfallsInputError

MAX_BYTES = 1 << 20
"""Default size cap: 1 MiB is far above any settings file the tool reads."""
MAX_DEPTH = 40
"""Deepest nesting of lists and mappings accepted."""
MAX_NODES = 200_000
"""Most values (scalars, lists, mappings) one document may hold."""


def _same(fix: str) -> str:
    return fix


class _Refusal(Exception):
    """Raised inside the loader; turned into a PitfallsInputError with the file's path."""

    def __init__(self, mark: Any, problem: str, fix: str) -> None:
        super().__init__(problem)
        self.mark = mark
        self.problem = problem
        self.fix = fix


class _Resolver(Resolver):
    """The YAML 1.1 resolver without timestamps: dates stay the text the user wrote."""


_Resolver.yaml_implicit_resolvers = {
    first: [(tag, regexp) for tag, regexp in resolvers if tag != "tag:yaml.org,2002:timestamp"]
    for first, resolvers in Resolver.yaml_implicit_resolvers.items()
}


class _StrictLoader(Reader, Scanner, Parser, Composer, SafeConstructor, _Resolver):
    """A safe loader that refuses anchors, aliases, duplicate keys, deep nesting and huge documents."""

    def __init__(self, stream: str) -> None:
        Reader.__init__(self, stream)
        Scanner.__init__(self)
        Parser.__init__(self)
        Composer.__init__(self)
        SafeConstructor.__init__(self)
        _Resolver.__init__(self)
        self._depth = 0
        self._nodes = 0

    def compose_node(self, parent: Any, index: Any) -> Any:  # type: ignore[override]
        event = self.peek_event()
        if isinstance(event, AliasEvent):
            raise _Refusal(event.start_mark, f"uses the YAML alias *{event.anchor}",
                           "write each value out in full; anchors (&) and aliases (*) are not allowed")
        if isinstance(event, (ScalarEvent, CollectionStartEvent)) and event.anchor is not None:
            raise _Refusal(event.start_mark, f"defines the YAML anchor &{event.anchor}",
                           "remove the anchor and write each value out in full; anchors (&) and aliases (*) "
                           "are not allowed")
        self._nodes += 1
        if self._nodes > MAX_NODES:
            raise _Refusal(event.start_mark, f"holds more than {MAX_NODES} values",
                           "this is far more than any settings file needs; check that it is the right file")
        if isinstance(event, CollectionStartEvent):
            self._depth += 1
            if self._depth > MAX_DEPTH:
                raise _Refusal(event.start_mark, f"is nested more than {MAX_DEPTH} levels deep",
                               "write plain sections of key: value pairs")
            try:
                return super().compose_node(parent, index)
            finally:
                self._depth -= 1
        return super().compose_node(parent, index)

    def construct_mapping(self, node: Any, deep: bool = False) -> dict:  # type: ignore[override]
        if isinstance(node, MappingNode):
            seen: dict[Any, Any] = {}
            for key_node, _ in node.value:
                if key_node.tag == "tag:yaml.org,2002:merge":
                    continue
                key = self.construct_object(key_node, deep=True)
                try:
                    hash(key)
                except TypeError:
                    continue  # SafeConstructor refuses it with its own message
                if key in seen:
                    first = seen[key]
                    raise _Refusal(key_node.start_mark,
                                   f"repeats the key {_short(key)!s} (first given on line {first.line + 1})",
                                   "keep one of the two; YAML allows each key once per section")
                seen[key] = key_node.start_mark
        return super().construct_mapping(node, deep=deep)


def _short(value: Any, limit: int = 40) -> str:
    text = repr(value) if isinstance(value, str) else str(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _line(mark: Any) -> str:
    return f"line {mark.line + 1}" if mark is not None else ""


def parse_yaml(text: str, path: str, what: str = "YAML file",
               fix: Callable[[str], str] = _same) -> Any:
    """One YAML document from ``text``, read safely; see the module docstring.

    Parameters
    ----------
    text : str
        The document.
    path : str
        The file it came from, for the error message.
    what : str
        What the file is, for the error message (``"rules file"``).
    fix : callable
        Rewrites every fix text (the rules loader uses it to point at the shipped defaults).

    Raises
    ------
    PitfallsInputError
        For anything that is not one plain YAML document.
    """
    loader = None
    try:
        loader = _StrictLoader(text)
        return loader.get_single_data()
    except _Refusal as err:
        raise PitfallsInputError(path, _line(err.mark), err.problem, fix(err.fix)) from None
    except yaml.MarkedYAMLError as err:
        mark = err.problem_mark or err.context_mark
        problem = " ".join(part for part in (err.context, err.problem) if part) or "not valid YAML"
        raise PitfallsInputError(path, _line(mark), f"not valid YAML: {problem}",
                                 fix("check the indentation and the colons (key: value, two spaces under each "
                                     "section)")) from None
    except yaml.YAMLError as err:
        position = getattr(err, "position", None)
        where = f"line {text[:position].count(chr(10)) + 1}" if isinstance(position, int) else ""
        raise PitfallsInputError(path, where, "not valid YAML: the text holds a character YAML does not allow",
                                 fix("remove control characters from the file")) from None
    except (ValueError, KeyError, TypeError, OverflowError) as err:
        # PyYAML's constructors let built-in errors escape for bad explicit tags such as `!!int abc`.
        raise PitfallsInputError(path, "", f"not valid YAML: a tagged value cannot be read ({_short(str(err), 80)})",
                                 fix("remove the !! tags and write plain values")) from None
    except RecursionError:
        raise PitfallsInputError(path, "", f"the {what} is nested too deeply",
                                 fix("write plain sections of key: value pairs")) from None
    finally:
        if loader is not None:
            loader.dispose()


def read_yaml(path: str | os.PathLike, what: str = "YAML file", max_bytes: int = MAX_BYTES,
              fix: Callable[[str], str] = _same) -> tuple[bytes, Any]:
    """The raw bytes and the document of a YAML file, read safely; see the module docstring.

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    what : str
        What the file is, for the error messages (``"rules file"``, ``"velocity file"``).
    max_bytes : int
        Files larger than this are refused before they are parsed.
    fix : callable
        Rewrites every fix text.

    Returns
    -------
    raw : bytes
        The file's bytes (for a checksum).
    document : Any
        The parsed document; None for an empty file.

    Raises
    ------
    PitfallsInputError
        For a missing, unreadable, oversized, non-UTF-8 or invalid file.
    """
    path = str(path)
    try:
        if os.path.isdir(path):
            raise IsADirectoryError(path)
        with open(path, "rb") as handle:
            raw = handle.read(max_bytes + 1)
    except FileNotFoundError:
        raise PitfallsInputError(path, "", f"{what} not found", fix("check the path and the file name")) from None
    except IsADirectoryError:
        raise PitfallsInputError(path, "", f"this is a folder, not a {what}",
                                 fix("give the path of the YAML file")) from None
    except OSError as err:
        raise PitfallsInputError(path, "", f"{what} cannot be read ({err.strerror or err})",
                                 fix("check that you may read the file")) from None
    if len(raw) > max_bytes:
        raise PitfallsInputError(path, "", f"the {what} is larger than {max_bytes // 1024} KiB",
                                 fix("check that it is the right file; settings files are a few KiB")) from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = raw[: err.start].count(b"\n") + 1
        raise PitfallsInputError(path, f"line {line}", f"byte {err.start} is not UTF-8 text",
                                 fix(f"save the {what} as UTF-8 text")) from None
    return raw, parse_yaml(text, path, what=what, fix=fix)
