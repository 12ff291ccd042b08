"""Writing ``steadyline start``'s guesses: the commented project.toml, and the one safe way it is
created (O_EXCL: nothing is ever overwritten, a link never followed).

Each key is written under a comment saying what its guess rests on, so the owner can judge it;
the metric's name, id and unit are made from the charted columns' names.
"""

from __future__ import annotations

import getpass
import json
import os
import re
from pathlib import Path

from ..config import SLUG_RE, CsvOptions
from .guessing import COLUMN_OPTIONS, Guess, StartError

_UNITS = {
    "mm": "mm",
    "cm": "cm",
    "m": "m",
    "kg": "kg",
    "g": "g",
    "kn": "kN",
    "n": "N",
    "kgf": "kgf",
    "nm": "N·m",
    "h": "hours",
    "hours": "hours",
    "min": "minutes",
    "minutes": "minutes",
    "s": "seconds",
    "seconds": "seconds",
    "days": "days",
    "pct": "%",
    "percent": "%",
    "m2": "m²",
    "bar": "bar",
    "c": "°C",
    "v": "V",
}


def _name_words(name: str) -> list[str]:
    return [w for w in re.split(r"[_\s-]+", name.strip()) if w]


def _unit_of(name: str) -> str:
    words = _name_words(name.lower())
    return _UNITS.get(words[-1], "") if len(words) > 1 else ""


def _humane(name: str, drop_unit: bool = True) -> str:
    words = _name_words(name)
    if drop_unit and len(words) > 1 and words[-1].lower() in _UNITS:
        words = words[:-1]
    text = " ".join(words).lower()
    return text[:1].upper() + text[1:] if text else name


def _q(text: str) -> str:
    return json.dumps(text, ensure_ascii=False)  # a TOML basic string is JSON's form


def _comment(text: str, width: int = 98) -> list[str]:
    words, lines, line = text.split(), [], "#"
    for w in words:
        if len(line) + 1 + len(w) > width and line != "#":
            lines.append(line)
            line = "#"
        line += " " + w
    lines.append(line)
    return lines


def _key(out: list[str], k: str, value: str, reason: str) -> None:
    """One key of the file, under the comment saying what it rests on."""
    out.extend(_comment(reason[:1].upper() + reason[1:]))
    out.append(f"{k} = {value}")


def default_owner() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):  # no user name to be found (a container without one)
        return "unknown"


def _metric_names(g: Guess) -> tuple[str, str, str]:
    """The metric's name, id and unit, from the names of the columns it charts."""
    measure = g.columns.get("value") or g.columns.get("count") or g.columns.get("category") or ""
    if g.type == "defects" and g.columns.get("size"):
        name = f"{_humane(g.columns['count'])} per {_humane(g.columns['size']).lower()}"
    else:
        name = _humane(measure) if measure else "Metric"
    mid = re.sub(r"[^a-z0-9]+", "-", _humane(measure).lower()).strip("-") or "metric"
    if not SLUG_RE.match(mid):
        mid = "metric-" + mid
    unit = _unit_of(g.columns["value"]) if g.type in ("continuous", "subgroups") else ""
    if g.type == "defectives" and g.columns.get("size"):
        unit = (
            _name_words(g.columns["size"])[0].lower()
            if len(_name_words(g.columns["size"])) > 1
            else ""
        )
    return name, mid, unit


def render(
    folder: Path,
    data: str,
    g: Guess,
    sniffed: list[str],
    owner: str,
    title: str | None,
    problem: str | None,
) -> str:
    """The commented project.toml of the guesses *g* for the file *data* in *folder*;
    *sniffed* are the reading options' reasons (``reading.sniff``)."""
    name, mid, unit = _metric_names(g)
    out = _comment(
        f"Written by `steadyline start` from {data} ({g.rows} data rows). Every "
        "value is a guess from the data; the comment above each says what it rests "
        "on. Check them, then run `steadyline check`. Every key is explained in the "
        "README (The project folder format)."
    ) + [""]
    _project_keys(out, folder, data, g, name, owner, title, problem)
    out.append("")
    if g.dates:
        out.extend(
            _comment(
                "All the data so far is the baseline. When a change is made, end "
                "the baseline before it and add after = [its first day]."
            )
        )
        out.append("[comparison]")
        out.append(f"baseline = [{g.dates[0].isoformat()}, {g.dates[1].isoformat()}]")
        out.append("")
    _metric_keys(out, data, g, name, mid, unit)
    csv_lines = []
    defaults = CsvOptions()
    for field in ("delimiter", "decimal", "encoding"):
        v = getattr(g.csv, field)
        if v != getattr(defaults, field):
            reason = next((s.split(": ", 1)[1] for s in sniffed if s.startswith(field)), "")
            csv_lines += _comment(reason[:1].upper() + reason[1:] + ".") + [f"{field} = {_q(v)}"]
    if g.rollup:
        out += ["", "[metric.rollup]"]
        _key(out, "period", _q(g.rollup[0]), g.why["rollup"] + ".")
        _key(out, "statistic", _q(g.rollup[1]), "The share of 1s (defective items) in each period.")
    if csv_lines:
        out += ["", "[metric.csv]"] + csv_lines
    return "\n".join(out) + "\n"


def _project_keys(
    out: list[str],
    folder: Path,
    data: str,
    g: Guess,
    name: str,
    owner: str,
    title: str | None,
    problem: str | None,
) -> None:
    """The project's own keys: title, owner, phase, problem."""
    project_title = title or _humane(folder.name.replace("-", "_"), drop_unit=False)
    span = f"from {g.dates[0].isoformat()} to {g.dates[1].isoformat()}" if g.dates else ""
    statement = problem or f"{name}: {g.rows} rows of {data}{' ' + span if span else ''}."
    _key(
        out,
        "title",
        _q(project_title),
        "From the folder's name." if not title else "Given on the command line.",
    )
    _key(
        out,
        "owner",
        _q(owner),
        "Who ran `steadyline start`; put the name of the project's lead."
        if owner == default_owner()
        else "Given on the command line.",
    )
    _key(
        out,
        "phase",
        _q("measure"),
        "A project with its first data is measuring its baseline: "
        "define | measure | analyze | improve | control.",
    )
    _key(
        out,
        "problem",
        _q(statement),
        "Given on the command line."
        if problem
        else "Say what goes wrong, how often, and what it costs; this line only describes the data.",
    )


def _metric_keys(out: list[str], data: str, g: Guess, name: str, mid: str, unit: str) -> None:
    """The metric's table up to its sub-tables: id, name, file, sheet, type, columns, unit,
    better."""
    out.append("[[metric]]")
    _key(out, "id", _q(mid), "From the charted column's name.")
    _key(out, "name", _q(name), "From the charted column's name; say what is measured.")
    _key(out, "file", _q(data), "The data file this project was started from.")
    if g.sheet is not None:
        _key(
            out,
            "sheet",
            _q(g.sheet),
            "The workbook's first sheet, which was read; name another "
            "sheet here to chart it instead.",
        )
    _key(out, "type", _q(g.type), g.why["type"] + ".")
    for col in COLUMN_OPTIONS:
        if col in g.columns:
            _key(out, col, _q(g.columns[col]), g.why.get(col, "given on the command line") + ".")
    if unit:
        _key(
            out,
            "unit",
            _q(unit),
            "From the end of the column's name."
            if g.type != "defectives"
            else "What is checked, from the name of the column of items checked.",
        )
    _key(out, "better", _q(g.better), g.why["better"][:1].upper() + g.why["better"][1:] + ".")


def write_new(target: Path, text: str) -> None:
    """Write *text* to *target*, which must not exist: opened with O_EXCL, so the open fails
    when anything is at the name (nothing is ever overwritten, a link is never followed). A
    write that fails half-way removes the file it made, so no half-written project.toml is
    left."""
    data = text.encode("utf-8")
    try:
        fd = os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, 0o666)
    except FileExistsError:
        raise StartError(
            f"{target}: already exists; steadyline start never overwrites a "
            "file: edit it, or move it away first"
        ) from None
    except OSError as e:
        raise StartError(f"{target}: cannot write it: {e.strerror}") from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
    except OSError as e:
        os.unlink(target)  # ours: made by the open above
        raise StartError(f"{target}: cannot write it: {e.strerror}") from None
