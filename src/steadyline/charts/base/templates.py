"""Spec templates, composed once per process and filled per chart.

Speed: composing a spec with Altair costs tens of milliseconds, so each display's spec *template*
(no data, placeholders for the per-metric texts) is composed once per process and cached by
display and variant flags. A chart is then a copy of the template with the placeholders filled in
and the data rows attached under ``datasets``, at display precision, with its title and
subtitle lines and axis titles wrapped to fit.
"""

from __future__ import annotations

import functools
import textwrap
from collections.abc import Callable, Collection, Hashable, Sequence

import orjson

from .. import style, vl
from .numbers import _display_row

_PLACEHOLDER = "\u00a7\u00a7"  # "§§name" marks a per-metric value in a cached template
_TEMPLATES: dict[tuple[Hashable, ...], dict] = {}
# Per cached template (by id; the templates stay alive in _TEMPLATES): its JSON text, which
# orjson turns back into a fresh deep copy far quicker than a Python walk, and the paths of its
# placeholders.
_COPIES: dict[int, tuple[bytes, list[tuple[tuple, str, bool]]]] = {}


# The properties every JavaScript object inherits (ECMA-262, "Properties of the Object
# Prototype Object", and annex B for the __ ones). Vega's runtime, as the site runs it (with
# the expression interpreter), refuses a chart in which one of these names stands alone as a
# constant text, such as an axis title ("Operator not defined"), and draws "__proto__" as
# "[object Object]". A metric's name or unit from the metadata is such a text on an axis (alone,
# or as one line of a wrapped title): every text filled into a template, and every line of a
# chart's title and subtitle, goes through constant_text.
_INHERITED = frozenset(
    {
        "constructor",
        "__proto__",
        "toString",
        "toLocaleString",
        "valueOf",
        "hasOwnProperty",
        "isPrototypeOf",
        "propertyIsEnumerable",
        "__defineGetter__",
        "__defineSetter__",
        "__lookupGetter__",
        "__lookupSetter__",
    }
)


def constant_text(text: str) -> str:
    """``text`` to stand alone in a spec as a constant (a title): as it is, or, when it is an
    inherited property's name, with a zero-width space after it, which nothing shows."""
    return text + "\u200b" if text in _INHERITED else text


def slot(name: str) -> str:
    """A placeholder string for a per-metric value in a template."""
    return _PLACEHOLDER + name


def list_slot(name: str) -> list[str]:
    """A placeholder for a per-metric list (e.g. a sort order or axis tick values)."""
    return [_PLACEHOLDER + name]


def cached_template(key: tuple[Hashable, ...], build: Callable[[], dict]) -> dict:
    """The template for ``key``, composed by ``build`` on first use in this process."""
    tpl = _TEMPLATES.get(key)
    if tpl is None:
        tpl = build()
        _TEMPLATES[key] = tpl
        _COPIES[id(tpl)] = _text_and_slots(tpl)
    return tpl


def _text_and_slots(tpl: dict) -> tuple[bytes, list[tuple[tuple, str, bool]]]:
    """A template's JSON text and the paths of its placeholders (see :func:`fill`)."""
    slots: list[tuple[tuple, str, bool]] = []
    _find_slots(tpl, (), slots)
    return orjson.dumps(tpl), slots


def clear_template_cache() -> None:
    """Forget every composed template (tests compare cached and fresh compositions)."""
    _TEMPLATES.clear()
    _COPIES.clear()


def _find_slots(node, path: tuple, out: list) -> None:
    """(path, name, is a list slot) of every placeholder under *node*, in document order."""
    if isinstance(node, dict):
        for k, v in node.items():
            _find_slots(v, (*path, k), out)
    elif isinstance(node, list):
        if len(node) == 1 and isinstance(node[0], str) and node[0].startswith(_PLACEHOLDER):
            out.append((path, node[0][len(_PLACEHOLDER) :], True))
            return
        for i, v in enumerate(node):
            _find_slots(v, (*path, i), out)
    elif isinstance(node, str) and node.startswith(_PLACEHOLDER):
        out.append((path, node[len(_PLACEHOLDER) :], False))


def _slot_value(name: str, values: dict, is_list: bool):
    if is_list and name in values and isinstance(values[name], list):
        return [_constant(v) for v in values[name]]
    if name not in values:
        raise KeyError(f"no value given for the template placeholder {name!r}")
    value = values[name]
    if isinstance(value, list):
        return [_constant(v) for v in value]
    return [_constant(value)] if is_list else _constant(value)


def _constant(value):
    """A value filled into a template: a text through :func:`constant_text`, else as it is."""
    return constant_text(value) if type(value) is str else value


def fill(node, values: dict):
    """A deep copy of a template with every placeholder replaced by ``values[name]``."""
    cached = _COPIES.get(id(node))  # a cached template (alive in _TEMPLATES: the id is its own)
    text, slots = cached if cached is not None else _text_and_slots(node)  # found now
    copy = orjson.loads(text)
    for path, name, is_list in slots:
        value = _slot_value(name, values, is_list)
        if not path:
            return value
        parent = copy
        for k in path[:-1]:
            parent = parent[k]
        parent[path[-1]] = value
    return copy


def finish_template(chart: dict, display: str) -> dict:
    """A template: the composed view (plain dict) with the schema, our shared config and the
    display name in usermeta."""
    spec = {"$schema": vl.SCHEMA, **chart}
    spec["config"] = style.vega_config()
    spec["usermeta"] = {"steadyline": {"display": display}}
    return spec


def make_spec(
    template: dict,
    values: dict,
    datasets: dict[str, list[dict]],
    title: str,
    subtitle: Sequence[str] = (),
    exact: Collection[str] = (),
) -> dict:
    """The template filled in, with the datasets at display precision and the title.

    exact: names of datasets whose rows already hold display-precision numbers (ints, strings,
    None and floats from :func:`disp` / :func:`disp_list`); they go in as they are, since
    rounding them again would change nothing.
    """
    spec = fill(template, values)
    # display precision in the page (the table, built from the caller's rows, keeps it all)
    spec["datasets"] = {
        name: rows if name in exact else [_display_row(r) for r in rows]
        for name, rows in datasets.items()
    }
    t: dict = {"text": constant_text(title)}
    sub = [constant_text(line) for s in subtitle if s for line in _wrapped(s)]
    if sub:
        t["subtitle"] = sub
    spec["title"] = t
    return spec


# Subtitle lines longer than this many characters are broken at spaces: a chart's title does not
# wrap by itself, and a long line would be cut off at the chart's edge.
SUBTITLE_WIDTH = 125


@functools.lru_cache(maxsize=256)
def _wrapped(line: str) -> tuple[str, ...]:
    if len(line) <= SUBTITLE_WIDTH:
        return (line,)
    return tuple(
        textwrap.wrap(line, SUBTITLE_WIDTH, break_long_words=False, break_on_hyphens=False)
    )


# Characters of a 12 px axis title per pixel of the axis it runs along.
_AXIS_CHARS_PER_PX = 1 / 5.4  # a title may run a little past its axis before it wraps
AXIS_TITLE_LINES = 3


def axis_title(text: str, length: int) -> str | list[str]:
    """An axis title that fits along an axis of ``length`` pixels: as it is when short enough,
    else broken at spaces into lines (at most ``AXIS_TITLE_LINES``, the last cut with an
    ellipsis). A long title on one line would stretch the chart to its own length."""
    lines = _axis_lines(text, length)
    return lines[0] if len(lines) == 1 and lines[0] == text else list(lines)


@functools.lru_cache(maxsize=256)
def _axis_lines(text: str, length: int) -> tuple[str, ...]:
    room = max(12, int(length * _AXIS_CHARS_PER_PX))
    if len(text) <= room:
        return (text,)
    lines = textwrap.wrap(text, room, break_long_words=True, break_on_hyphens=False)
    if len(lines) > AXIS_TITLE_LINES:
        lines = lines[:AXIS_TITLE_LINES]
        lines[-1] = lines[-1][: room - 1].rstrip() + "\u2026"
    return tuple(lines)
