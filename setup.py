"""Copies the top-level site_templates/ folder into the package when it is built.

The repository keeps templates at the top level (site_templates/) so that designers find them;
the installed package must still find them after a plain `pip install .`, so the build step
places a copy inside the package as package data. In a development checkout the package reads
the top-level folder directly (see steadyline.site.templates_dir).
"""

import shutil
from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py


class BuildWithTemplates(build_py):
    def run(self):
        super().run()
        src = Path(__file__).parent / "site_templates"
        dst = Path(self.build_lib) / "steadyline" / "site_templates"
        if dst.exists():
            shutil.rmtree(dst)
        shutil.copytree(src, dst)


setup(cmdclass={"build_py": BuildWithTemplates})
