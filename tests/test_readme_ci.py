"""The CI script runs the test command the README gives, character for character.

.ci/run marks the command with the comment "# the README's test command, verbatim"; the line
after it must appear in one of README.md's fenced code blocks, either as the whole line or as the
end of a `&&` chain whose earlier steps .ci/run also runs before it (e.g. the apt-get steps).
"""

from __future__ import annotations

import os
import re
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
CI_RUN = REPO / ".ci" / "run"
README = REPO / "README.md"
MARKER = "# the README's test command, verbatim"


def ci_lines() -> list[str]:
    assert CI_RUN.is_file(), ".ci/run is missing"
    return CI_RUN.read_text(encoding="utf-8").splitlines()


def ci_command() -> tuple[str, list[str], list[str]]:
    """The command line after the marker comment, and the script's lines before and after it."""
    lines = [line.strip() for line in ci_lines()]
    hits = [i for i, line in enumerate(lines) if line == MARKER]
    assert len(hits) == 1, f".ci/run must carry the comment {MARKER!r} exactly once"
    i = hits[0]
    assert i + 1 < len(lines) and lines[i + 1], (
        "the line after the marker comment must be the command"
    )
    return lines[i + 1], lines[:i], lines[i + 2 :]


def code_block_lines(markdown: str) -> list[str]:
    """Lines inside fenced code blocks (``` or ~~~ fences, any info string)."""
    out, fence = [], None
    for line in markdown.splitlines():
        m = re.match(r"^\s{0,3}(`{3,}|~{3,})", line)
        if fence is None:
            if m:
                fence = m.group(1)
        elif (
            m
            and m.group(1)[0] == fence[0]
            and len(m.group(1)) >= len(fence)
            and not line.strip()[len(m.group(1)) :].strip()
        ):
            fence = None
        else:
            out.append(line.strip())
    return out


def test_ci_script_is_strict_and_installs_the_browser():
    lines = ci_lines()
    assert lines[0].startswith("#!") and "bash" in lines[0]
    assert "set -euo pipefail" in (line.strip() for line in lines)
    command, before, after = ci_command()
    assert "apt-get update" in before
    assert "apt-get install -y chromium" in before
    # the command is the script's last line, so its exit status is the script's
    assert not [line for line in after if line and not line.startswith("#")], (
        "nothing may run after the README's test command in .ci/run"
    )
    assert "pytest" in command
    assert os.access(CI_RUN, os.X_OK), ".ci/run must be executable"


def test_readme_shows_the_ci_test_command_verbatim():
    command, before, _ = ci_command()
    assert README.is_file(), "README.md is missing"
    blocks = code_block_lines(README.read_text(encoding="utf-8"))
    exact = [line for line in blocks if line == command]
    chained = [line for line in blocks if line.endswith(" && " + command)]
    assert exact or chained, f"README.md shows no code line ending with: {command}"
    if not exact:
        # the README chains extra steps in front: .ci/run must run each of them before the command
        steps = [s.strip() for s in chained[0][: -len(" && " + command)].split(" && ")]
        missing = [s for s in steps if s not in before]
        assert not missing, f".ci/run does not run these README steps before the command: {missing}"


def test_ci_runs_the_code_checks_before_the_tests():
    """Lint, layout and types are held at zero by CI: .ci/run runs scripts/check (the one check
    command DEVELOPERS.md names, and the pre-commit hook's) before the README's test command."""
    _, before, _ = ci_command()
    assert "bash scripts/check" in before
    check = (CI_RUN.parent.parent / "scripts" / "check").read_text(encoding="utf-8")
    steps = [line.split()[:2] for line in check.splitlines() if line and line[0] not in "#s"]
    assert ["ruff", "check"] in steps and ["ruff", "format"] in steps and ["mypy"] in steps
    hook = (CI_RUN.parent.parent / ".pre-commit-config.yaml").read_text(encoding="utf-8")
    assert "entry: bash scripts/check" in hook
