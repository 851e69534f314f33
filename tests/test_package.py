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
