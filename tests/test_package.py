"""Packaging: the installed package carries its data and starts its CLI."""

from importlib import resources

import pytest

from typer.testing import CliRunner

from elucidate.cli import app


def test_fragments_ship_with_the_package():
    # DESIGN.md, Packaging: fragments/ must be found from a non-editable install.
    import elucidate

    if "site-packages" not in elucidate.__file__:
        pytest.skip("running from a source checkout; CI runs this against the installed package")
    assert resources.files("elucidate.fragments").joinpath("__init__.py").is_file()


def test_version_and_help():
    runner = CliRunner()
    result = runner.invoke(app, ["--version"])
    assert result.exit_code == 0
    assert result.stdout.startswith("elucidate ")
    result = runner.invoke(app, ["--help"])
    assert result.exit_code == 0
    assert "authentic reference standard" in result.stdout


def test_fragments_root_resolves():
    from elucidate.resources import fragments_root

    assert fragments_root().joinpath("__init__.py").is_file()


def _run(*args):
    import subprocess
    import sys

    return subprocess.run(
        [sys.executable, "-m", "elucidate", *args], capture_output=True, text=True, timeout=120
    )


@pytest.mark.parametrize(
    "args",
    [
        ("read", "--formula", "C2H6O", "--h1", "1.2 (s, 6H)", "--field", "abc"),  # typer's own check
        ("read", "tests"),  # a directory given as the case file
        ("no-such-command",),
    ],
)
def test_usage_errors_are_one_line(args):
    # House rule: every user error is one line on stderr and exit code 2.
    result = _run(*args)
    assert result.returncode == 2
    assert len(result.stderr.strip().splitlines()) == 1
    assert result.stderr.startswith("error: ")
    assert "Traceback" not in result.stderr
