"""The JSON Schemas of project.toml and portfolio.toml shipped for editors.

They are made from the validator's own key table (steadyline.config.KEYS) and the README's
comments; here they are held equal to the generator's output, checked against every file of the
demo, shown to refuse a misspelt key, and held to the validator key by key: a value of the wrong
type for any key is refused by both.
"""

from __future__ import annotations

import copy
import datetime as dt
import json
import tomllib
from importlib import resources
from pathlib import Path

import jsonschema
import pytest

from steadyline.config.keys import KEYS
from steadyline.config.portfolio import load_portfolio
from steadyline.config.project import load_project
from steadyline.errors import ProjectError
from steadyline.schema import SCHEMA_FILES, render

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "projects"
README = (ROOT / "README.md").read_text(encoding="utf-8")


def shipped(file: str) -> dict:
    text = (
        resources.files("steadyline")
        .joinpath("schemas", SCHEMA_FILES[file])
        .read_text(encoding="utf-8")
    )
    return json.loads(text)


def as_json(value):
    """TOML data as an editor hands it to a JSON Schema: dates and times become their ISO
    text (JSON has no date type; that Taplo validates a TOML date as its text is from memory);
    everything else maps one to one."""
    if isinstance(value, dict):
        return {k: as_json(v) for k, v in value.items()}
    if isinstance(value, list):
        return [as_json(v) for v in value]
    if isinstance(value, dt.date | dt.datetime | dt.time):
        return value.isoformat()
    return value


def validator(file: str) -> jsonschema.Draft4Validator:
    schema = shipped(file)
    jsonschema.Draft4Validator.check_schema(schema)
    return jsonschema.Draft4Validator(schema)


@pytest.mark.parametrize("file", sorted(SCHEMA_FILES))
def test_shipped_schema_is_the_generators_output(file):
    path = ROOT / "src" / "steadyline" / "schemas" / SCHEMA_FILES[file]
    assert path.read_text(encoding="utf-8") == render(file, README), (
        "run python scripts/make_schemas.py"
    )


DEMO_PROJECTS = sorted(p.parent.name for p in DEMO.glob("*/project.toml"))


def test_the_demo_has_projects():
    assert len(DEMO_PROJECTS) >= 9


@pytest.mark.parametrize("slug", DEMO_PROJECTS)
def test_every_demo_project_toml_is_valid(slug):
    data = tomllib.loads((DEMO / slug / "project.toml").read_text(encoding="utf-8"))
    errors = [e.message for e in validator("project").iter_errors(as_json(data))]
    assert errors == []


def test_the_demo_portfolio_toml_is_valid():
    data = tomllib.loads((DEMO / "portfolio.toml").read_text(encoding="utf-8"))
    assert [e.message for e in validator("portfolio").iter_errors(as_json(data))] == []


def _demo(slug="wheel-build-lead-time") -> dict:
    return as_json(tomllib.loads((DEMO / slug / "project.toml").read_text(encoding="utf-8")))


@pytest.mark.parametrize(
    "where, right, wrong",
    [
        ((), "title", "titel"),
        (("metric", 0), "better", "beter"),
        (("metric", 0, "rollup"), "period", "periode"),
        (("comparison",), "baseline", "basline"),
        (("event", 0), "label", "lable"),
        (("phase_dates",), "analyze", "analyse"),
    ],
)
def test_a_misspelt_key_fails(where, right, wrong):
    data = _demo()
    table = data
    for step in where:
        table = table[step]
    table[wrong] = table.pop(right)
    errors = list(validator("project").iter_errors(data))
    assert any(wrong in e.message for e in errors), [e.message for e in errors]


def test_a_misspelt_portfolio_key_fails():
    data = as_json(tomllib.loads((DEMO / "portfolio.toml").read_text(encoding="utf-8")))
    data["signal_rule"] = data.pop("signal_rules")
    assert any("signal_rule" in e.message for e in validator("portfolio").iter_errors(data))


def test_a_value_outside_its_choices_fails():
    data = _demo()
    data["metric"][0]["type"] = "continous"
    assert list(validator("project").iter_errors(data))


# A value of a type no key of that kind takes: the validator and the schema must both refuse it.
WRONG = {
    "text": 5,
    "id": "Lead Time",
    "choice": 5,
    "number": "x",
    "integer": 1.5,
    "positive": -1,
    "boolean": "yes",
    "date": True,
    "period": "2026-01-05",
    "text-list": "a",
    "char": ";;",
    "bins": True,
    "table": 5,
    "tables": 5,
}


def _leaf_cases():
    """(table path in the demo project, key) for every key of KEYS in a project.toml."""
    paths = {
        "project": (),
        "phase_dates": ("phase_dates",),
        "comparison": ("comparison",),
        "event": ("event", 0),
        "metric": ("metric", 0),
        "metric.rollup": ("metric", 0, "rollup"),
        "metric.csv": ("metric", 0, "csv"),
        "metric.set_aside": ("metric", 0, "set_aside", 0),
    }
    return [(table, paths[table], k) for table in paths for k in KEYS[table]]


@pytest.mark.parametrize(
    "table, path, key", _leaf_cases(), ids=[f"{t}.{k.name}" for t, _, k in _leaf_cases()]
)
def test_schema_and_validator_refuse_the_same_wrong_type(tmp_path, table, path, key):
    data = _demo()
    data["metric"][0].setdefault("csv", {})
    spot = data
    for step in path:
        spot = spot[step]
    spot[key.name] = WRONG[key.kind]
    assert list(validator("project").iter_errors(copy.deepcopy(data))), key
    # The same file through the validator: the demo's folder copied, the value written as TOML.
    folder = tmp_path / "p"
    folder.mkdir()
    for f in (DEMO / "wheel-build-lead-time").iterdir():
        (folder / f.name).write_bytes(f.read_bytes())
    (folder / "project.toml").write_text(_toml(data), encoding="utf-8")
    with pytest.raises(ProjectError) as e:
        load_project(folder, tmp_path)
    where = ".".join(str(s) for s in path if isinstance(s, str))
    wheres = {p.where for p in e.value.problems if p.severity == "error"}
    prefix = {
        "event": "event[1].",
        "metric": "metric[1].",
        "metric.rollup": "metric[1].rollup.",
        "metric.csv": "metric[1].csv.",
        "metric.set_aside": "metric[1].set_aside[1].",
        "project": "",
    }.get(table, f"{where}.")
    assert any(w.startswith(prefix + key.name) or w == key.name for w in wheres), wheres


def test_the_portfolio_validator_refuses_what_the_schema_refuses(tmp_path):
    for key in KEYS["portfolio"]:
        data = {key.name: WRONG[key.kind]}
        assert list(validator("portfolio").iter_errors(data)), key
        (tmp_path / "portfolio.toml").write_text(_toml(data), encoding="utf-8")
        _settings, problems = load_portfolio(tmp_path)
        assert [p.where for p in problems] == [key.name], key


def _toml(data: dict) -> str:
    """A small TOML writer for the shapes above: inline values, tables and arrays of tables."""

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, str):
            if len(v) >= 10 and v[:4].isdigit() and v[4] == "-":
                return v  # an ISO date, written back as a TOML date
            return json.dumps(v)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{" + ", ".join(f"{k} = {value(x)}" for k, x in v.items()) + "}"
        return repr(v)

    lines = [
        f"{k} = {value(v)}"
        for k, v in data.items()
        if not isinstance(v, dict) and not (isinstance(v, list) and v and isinstance(v[0], dict))
    ]
    for k, v in data.items():
        if isinstance(v, dict):
            lines += [f"[{k}]"] + [f"{kk} = {value(x)}" for kk, x in v.items()]
        elif isinstance(v, list) and v and isinstance(v[0], dict):
            for item in v:
                lines.append(f"[[{k}]]")
                lines += [f"{kk} = {value(x)}" for kk, x in item.items()]
    return "\n".join(lines) + "\n"
