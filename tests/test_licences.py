"""The site carries the licence notices of the JavaScript it ships.

The Vega, Vega-Lite and vega-embed bundle is BSD-3-Clause, its dependencies ISC, MIT, 0BSD or
Unlicense; all of them require the notice to travel with every copy, and every published site is
a copy. scripts/third_party_licences.py writes the file from the packages' own licence files.
"""

from __future__ import annotations

import re

import vl_convert

from steadyline.site.assets import LICENCES


def test_every_page_links_the_licences_published_beside_the_bundle(demo_site):
    text = (demo_site / "assets" / LICENCES).read_text(encoding="utf-8")
    for name in ("vega", "vega-lite", "vega-embed", "d3-array"):
        assert re.search(rf"^{re.escape(name)} \d+\.\d+\.\d+ \(", text, re.M), name
    assert "Redistribution and use in source and binary forms" in text  # BSD-3's own words
    pages = sorted(demo_site.rglob("*.html"))
    assert pages
    for page in pages:
        if page.name == "handover.html":
            # the hand-over pack carries no code of those libraries, only drawings they made;
            # it is mailed on its own, where a link to the site's assets would lead nowhere
            assert "Charts drawn with Vega and Vega-Lite" in page.read_text(encoding="utf-8")
            continue
        depth = len(page.relative_to(demo_site).parts) - 1
        href = "../" * depth + f"assets/{LICENCES}"
        assert f'href="{href}"' in page.read_text(encoding="utf-8"), page


def test_the_licences_name_the_versions_the_installed_vl_convert_bundles():
    """After an upgrade of vl-convert, rerun scripts/third_party_licences.py."""
    from steadyline.site.templates import templates_dir

    head = (templates_dir() / "assets" / LICENCES).read_text(encoding="utf-8")[:600]
    assert f"vl-convert-python {vl_convert.__version__}" in head
    assert f"Vega {vl_convert.get_vega_version()}," in head
    assert f"vega-embed {vl_convert.get_vega_embed_version()}," in head
