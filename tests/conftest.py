"""Shared test helpers."""

from __future__ import annotations

import pytest
from click.testing import CliRunner


@pytest.fixture
def run_cli():
    """Invoke the symfilt CLI in-process; returns (exit_code, stdout, stderr)."""
    from symfilt.cli import cli

    def run(*args):
        runner = CliRunner()
        result = runner.invoke(cli, list(args), catch_exceptions=False)
        return result.exit_code, result.stdout, result.stderr

    return run
