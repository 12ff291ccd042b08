"""Static assets of the site: the offline Vega bundle, our stylesheet and script, licences.

The Vega, Vega-Lite and vega-embed JavaScript comes from vl-convert-python's bundled copy, so the
site needs no network: it is written once under assets/ and shared by every page.
"""

from __future__ import annotations

import functools
import hashlib
import os

from .common import cache_dir
from .templates import templates_dir

VEGA_BUNDLE = "vega-bundle.js"
LICENCES = "THIRD-PARTY-LICENCES.txt"


@functools.lru_cache(maxsize=1)
def vega_bundle() -> str:
    """The Vega, Vega-Lite and vega-embed JavaScript, from vl-convert. Making it takes about a
    second, so a copy is kept in the user's cache folder, named by the vl-convert version it
    came from (a cache that cannot be read or written is simply not used)."""
    import vl_convert

    cache = cache_dir() / f"vega-bundle-vl-convert-{_vl_convert_version()}.js"
    try:
        return cache.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        pass
    # vl-convert's stub marks the optional snippet as required (the function's own
    # docstring: "Optionally, a JavaScript snippet may be provided")
    text = vl_convert.javascript_bundle()  # type: ignore[call-arg]
    try:
        cache.parent.mkdir(parents=True, exist_ok=True)
        tmp = cache.with_name(f".{cache.name}.{os.getpid()}.tmp")
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, cache)  # whole or not at all, also with builds running side by side
    except OSError:
        pass
    return text


def asset_files() -> dict[str, bytes]:
    """Every file under assets/, name -> bytes (deterministic)."""
    src = templates_dir() / "assets"
    files = {
        p.relative_to(src).as_posix(): p.read_bytes() for p in sorted(src.rglob("*")) if p.is_file()
    }
    files[VEGA_BUNDLE] = vega_bundle().encode("utf-8")
    return files


def assets_key() -> str:
    """Identifies the assets without building the Vega bundle (which takes seconds): the
    bundle depends only on the vl-convert version, our own files on their content."""
    h = hashlib.sha256(f"vl-convert {_vl_convert_version()}".encode())
    src = templates_dir() / "assets"
    for p in sorted(src.rglob("*")):
        if p.is_file():
            h.update(p.relative_to(src).as_posix().encode())
            h.update(hashlib.sha256(p.read_bytes()).digest())
    return h.hexdigest()


def _vl_convert_version() -> str:
    """The installed vl-convert's version: its module's ``__version__``, which its type stub
    does not declare (the package's metadata version differs: "1.9.0.post1" for "1.9.0")."""
    import vl_convert

    return str(vars(vl_convert)["__version__"])
