"""The README's test command is what CI runs, and its first command names a bundled example."""

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return re.findall(r"```sh\n(.*?)\n```", text, flags=re.S)


def test_ci_runs_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8").strip().splitlines()
    assert _commands()[1].strip() == ci[-1].strip()


def test_first_command_uses_a_bundled_example():
    first = _commands()[0]
    example = re.search(r"examples/\S+\.circuit", first).group(0)
    assert (ROOT / example).is_file()


def test_readme_opens_with_the_job():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    first_paragraph = text.split("\n\n")[1]
    assert "symcirc" in first_paragraph and "engineers" in first_paragraph
