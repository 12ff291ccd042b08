"""Finding and rendering the Jinja2 templates.

In a source checkout the templates live at the top of the repository (site_templates/); a
wheel carries them inside the package (pyproject.toml maps the folder there), where
importlib.resources finds them. An editable install imports the package from src/, so there
the checkout's folder is used. Autoescaping is on for every
template, so text from metadata files, CSV cells and category names is always escaped.
"""

from __future__ import annotations

import functools
import hashlib
import importlib.resources
from pathlib import Path

import jinja2


@functools.lru_cache(maxsize=1)
def templates_dir() -> Path:
    """The site_templates folder: the package's own copy when installed from a wheel, else the
    one at the top of the source checkout."""
    packaged = Path(str(importlib.resources.files("steadyline") / "site_templates"))
    if packaged.is_dir():
        return packaged
    here = Path(__file__).resolve().parent.parent  # src/steadyline
    checkout = here.parent.parent / "site_templates"
    if checkout.is_dir():
        return checkout
    raise FileNotFoundError("steadyline's site_templates folder is missing from the installation")


def _bytecode_cache() -> jinja2.BytecodeCache | None:
    """Compiled templates kept between runs (Jinja2's own cache in a per-user folder of the
    system's temporary directory, keyed by each template's source), so that a rebuild in a
    fresh process does not compile every template again. None where it cannot be set up."""
    try:
        return jinja2.FileSystemBytecodeCache(pattern="__steadyline_%s.cache")
    except OSError:
        return None


@functools.lru_cache(maxsize=1)
def environment() -> jinja2.Environment:
    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(templates_dir())),
        bytecode_cache=_bytecode_cache(),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=False,
        lstrip_blocks=False,
        keep_trailing_newline=True,
    )


def render(name: str, **context) -> str:
    return environment().get_template(name).render(**context)


@functools.lru_cache(maxsize=1)
def templates_fingerprint() -> str:
    """A hash of every template and asset file, part of each project's input hash."""
    h = hashlib.sha256()
    root = templates_dir()
    for p in sorted(root.rglob("*")):
        if p.is_file():
            h.update(p.relative_to(root).as_posix().encode())
            h.update(hashlib.sha256(p.read_bytes()).digest())
    return h.hexdigest()
