"""Every chart spec checked against the Vega-Lite schema that Altair ships (a test aid: Altair is
a test dependency, not a runtime one).

The templates are written as plain Vega-Lite dicts (see ``steadyline/charts/vl.py``) because composing them with
Altair objects cost seconds in every fresh worker process. Altair stays the project's authority on
Vega-Lite: the tests validate every display and variant against Altair's bundled Vega-Lite JSON
schema (tests/charts/test_schema.py), with the data rows cut to one (they are plain records). The
check is not run during builds: at about 0.2 s a layout it would cost more than the charts.
A spec that does not match the schema raises :class:`SpecError`.
"""

from __future__ import annotations

import functools
import hashlib
import json


class SpecError(ValueError):
    """A chart spec that is not valid Vega-Lite."""


_CHECKED: set[str] = set()


@functools.lru_cache(maxsize=1)
def _schema() -> dict:
    from altair.vegalite.v6.schema import core

    return core.load_schema()


def layout_key(spec: dict) -> str:
    """A hash of everything but the data and the title: specs sharing it share a template."""
    shell = {k: v for k, v in spec.items() if k not in ("datasets", "title")}
    return hashlib.sha256(json.dumps(shell, sort_keys=True, default=str).encode()).hexdigest()


def check_spec(spec: dict) -> None:
    """Validate *spec* against the Vega-Lite schema, once per layout per process."""
    key = layout_key(spec)
    if key in _CHECKED:
        return
    from altair.utils.schemapi import validate_jsonschema

    shell = dict(spec)
    shell["datasets"] = {name: rows[:1] for name, rows in spec.get("datasets", {}).items()}
    schema = _schema()
    try:
        validate_jsonschema(shell, schema, rootschema=schema)
    except Exception as e:  # jsonschema's ValidationError, whose text can be very long
        display = spec.get("usermeta", {}).get("steadyline", {}).get("display", "chart")
        raise SpecError(
            f"the {display} spec is not valid Vega-Lite: {str(e).splitlines()[0][:300]}"
        ) from None
    _CHECKED.add(key)
