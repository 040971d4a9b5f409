"""Shared by every test: the command line run in-process, and circuits written to files
(the shared circuits themselves are in tests/circuits.py)."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import NamedTuple

import pytest

from symcirc.cli import main


class Run(NamedTuple):
    """What one command printed and its exit status."""

    status: int
    out: str
    err: str


@pytest.fixture
def cli(capsys) -> Callable[..., Run]:
    """`cli("derive", path, "--format", "json")` runs `symcirc.cli.main` in this process
    and returns (status, stdout, stderr) of that run alone."""
    def run(*argv: str | Path) -> Run:
        capsys.readouterr()  # drop what earlier steps of the test printed
        status = main([str(a) for a in argv])
        captured = capsys.readouterr()
        return Run(status, captured.out, captured.err)

    return run


@pytest.fixture
def circuit_file(tmp_path) -> Callable[..., Path]:
    """`circuit_file(circuits.BRIDGE)`: the text written to a `.circuit` file in the test's
    own folder; its path."""
    def write(text: str, name: str = "circuit.circuit") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return write
