"""Writes site_templates/assets/THIRD-PARTY-LICENCES.txt: the licence texts of the JavaScript the
site carries (the Vega, Vega-Lite and vega-embed bundle made by vl-convert, and every package
bundled into it).

The minified bundle carries no licence text, but its BSD-3-Clause, ISC and MIT licences require
the notices to travel with every copy, and every published site is a copy. This script installs
the exact versions the installed vl-convert bundles into a temporary folder with npm, then
gathers each package's own licence file (or, where a package ships none, its declared licence
and author). The result is committed; a test checks it names the versions of the installed
vl-convert, so an upgrade that changes them is noticed.

Run:  python scripts/third_party_licences.py      (needs npm and the npm registry)
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
import tempfile
from pathlib import Path

import vl_convert

OUT = (
    Path(__file__).resolve().parent.parent
    / "site_templates"
    / "assets"
    / "THIRD-PARTY-LICENCES.txt"
)
LICENCE_FILES = re.compile(r"^(licen[cs]e|copying)(\.(md|txt|markdown))?$", re.IGNORECASE)


def bundled_versions() -> dict[str, str]:
    """The versions of the top-level libraries in vl-convert's default bundle."""
    bundle = vl_convert.javascript_bundle()
    m = re.search(r'="(\d+\.\d+\.\d+)";function \w+\(e\)\{return \w+\(e,"or"\)', bundle)
    vegalite = m.group(1) if m else vl_convert.get_vegalite_versions()[-1]
    return {
        "vega": vl_convert.get_vega_version(),
        "vega-lite": vegalite,
        "vega-embed": vl_convert.get_vega_embed_version(),
        "vega-themes": vl_convert.get_vega_themes_version(),
        "lodash.debounce": "4",  # vl-convert's bundle offers it as lodashDebounce
    }


def packages(root: Path) -> list[Path]:
    """Every installed package's own folder (node_modules/<name> or node_modules/@scope/<name>,
    nested node_modules included), never a sub-folder of a package that has a package.json."""
    found = []
    for pj in sorted((root / "node_modules").glob("**/package.json")):
        parts = pj.relative_to(root).parts[:-1]
        last = len(parts) - 1 - parts[::-1].index("node_modules")
        rest = parts[last + 1 :]
        if len(rest) == 1 or (len(rest) == 2 and rest[0].startswith("@")):
            found.append(pj.parent)
    return found


def text_of(folder: Path) -> tuple[str, str, str, str]:
    meta = json.loads((folder / "package.json").read_text(encoding="utf-8"))
    name, version = meta["name"], meta.get("version", "?")
    licence = meta.get("license") or "see below"
    if isinstance(licence, dict):
        licence = licence.get("type", "see below")
    files = sorted(p for p in folder.iterdir() if p.is_file() and LICENCE_FILES.match(p.name))
    if files:
        body = files[0].read_text(encoding="utf-8", errors="replace").strip()
    else:
        author = meta.get("author")
        if isinstance(author, dict):
            author = author.get("name")
        body = (
            f"The package ships no licence file; its package.json declares the licence "
            f"{licence}" + (f", author {author}" if author else "") + "."
        )
    return name, version, licence, body


def main() -> int:
    versions = bundled_versions()
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "package.json").write_text('{"name": "licences", "private": true}\n')
        subprocess.run(
            [
                "npm",
                "install",
                "--no-audit",
                "--no-fund",
                "--omit=dev",
                *(f"{n}@{v}" for n, v in versions.items()),
            ],
            cwd=root,
            check=True,
            stdout=subprocess.DEVNULL,
        )
        seen: dict[tuple[str, str], tuple[str, str]] = {}
        for folder in packages(root):
            name, version, licence, body = text_of(folder)
            seen[(name, version)] = (licence, body)
    head = [
        "Third-party software in this site",
        "=================================",
        "",
        "assets/vega-bundle.js is the JavaScript bundle of vl-convert-python "
        f"{vl_convert.__version__}: Vega {versions['vega']}, Vega-Lite {versions['vega-lite']}, "
        f"vega-embed {versions['vega-embed']}, vega-themes {versions['vega-themes']} and the "
        "packages they depend on. Their licences follow, one section per package and version.",
        "",
    ]
    sections = []
    for (name, version), (licence, body) in sorted(seen.items()):
        sections.append(f"{'-' * 78}\n{name} {version} ({licence})\n{'-' * 78}\n\n{body}\n")
    OUT.write_text("\n".join(head) + "\n" + "\n".join(sections), encoding="utf-8")
    print(f"wrote {OUT} ({len(seen)} packages)", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
