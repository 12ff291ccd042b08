"""Write src/steadyline/stats/_constant_table.py: d2, d3, c4 for n = 2..100, full float precision.

    PYTHONPATH=src python scripts/make_constants.py            # rewrite the table
    PYTHONPATH=src python scripts/make_constants.py --check    # only say whether it is current

d2 and d3 come from the same numerical integrals that steadyline.stats.constants runs for
subgroup sizes beyond the table (scipy.integrate quad and dblquad over the standard normal range
distribution), so a tabulated constant and an integrated one are the same number; c4 from its
closed form through scipy.special.gammaln. Run it again after changing those functions;
tests/stats/test_constants.py recomputes a spread of entries.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TABLE = ROOT / "src" / "steadyline" / "stats" / "_constant_table.py"
N_MAX = 100


def render(n_max: int = N_MAX) -> str:
    import scipy

    from steadyline.stats.constants import _c4_by_gammaln, _d2_by_integral, _d3_by_integral

    lines = [
        f'"""d2, d3 and c4 for subgroup sizes n = 2..{n_max}, to full float precision.',
        "",
        "GENERATED FILE, do not edit by hand. Written by scripts/make_constants.py (run",
        "`PYTHONPATH=src python scripts/make_constants.py`), which evaluates _d2_by_integral,",
        "_d3_by_integral (scipy.integrate quad and dblquad) and _c4_by_gammaln",
        "(scipy.special.gammaln) of steadyline.stats.constants; scipy",
        f"{scipy.__version__} when last written. Keeping the results here spares a rebuild the",
        "import of scipy and the double integral.",
        '"""',
        "",
        f"TABLE_MAX_N = {n_max}",
        "",
    ]
    for name, fn in (("D2", _d2_by_integral), ("D3", _d3_by_integral), ("C4", _c4_by_gammaln)):
        lines.append(f"{name}: dict[int, float] = {{")
        for n in range(2, n_max + 1):
            lines.append(f"    {n}: {float(fn(n))!r},")
        lines.append("}")
        lines.append("")
    return "\n".join(lines)


def main() -> int:
    ap = argparse.ArgumentParser(
        description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter
    )
    ap.add_argument("--check", action="store_true", help="compare with the file, write nothing")
    args = ap.parse_args()
    if not TABLE.exists():
        # steadyline.stats imports the table; an empty one lets it load so the table can be made
        TABLE.write_text(
            "TABLE_MAX_N = 1\n"
            + "".join(f"{name}: dict[int, float] = {{}}\n" for name in ("D2", "D3", "C4")),
            "utf-8",
        )
    text = render()
    if args.check:
        current = TABLE.read_text("utf-8") == text
        print(f"{TABLE.relative_to(ROOT)} is {'up to date' if current else 'OUT OF DATE'}")
        return 0 if current else 1
    TABLE.write_text(text, "utf-8")
    print(f"wrote {TABLE.relative_to(ROOT)} (n = 2..{N_MAX})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
