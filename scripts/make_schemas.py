"""Write the JSON Schemas of project.toml and portfolio.toml into src/steadyline/schemas/.

Run after changing a key (steadyline.config.KEYS) or a comment of the README's TOML examples;
tests/test_editor_schema.py fails until the shipped files equal what this writes.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "src"))

from steadyline.schema import SCHEMA_FILES, render  # noqa: E402


def main() -> None:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    out = ROOT / "src" / "steadyline" / "schemas"
    out.mkdir(exist_ok=True)
    for file, name in SCHEMA_FILES.items():
        (out / name).write_text(render(file, readme), encoding="utf-8")
        print(f"wrote {out / name}")


if __name__ == "__main__":
    main()
