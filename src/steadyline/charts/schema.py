"""Every chart spec checked against the Vega-Lite schema that Altair ships.

The templates are written as plain Vega-Lite dicts (see ``vl.py``) because composing them with
Altair objects cost seconds in every fresh worker process. Altair stays the project's authority on
Vega-Lite: each distinct spec layout is validated against Altair's bundled Vega-Lite JSON schema
once per process, with its data rows left out (they are plain records, and checking thousands of
them would cost more than the chart). A spec that does not match the schema raises
:class:`SpecError` instead of reaching a browser as an empty chart.
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
        raise SpecError(f"the {display} spec is not valid Vega-Lite: "
                        f"{str(e).splitlines()[0][:300]}") from None
    _CHECKED.add(key)
