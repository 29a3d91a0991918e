"""The command line's options and its edges: help, refused values, a reader that goes away,
and the preview command's errors before it serves anything."""

from __future__ import annotations

import argparse
import csv
import io
import socket
import subprocess
import sys
from importlib import import_module
from pathlib import Path

import pytest

from kitleaf.cli import main, parser
from kitleaf.commands import ORDER

DEMO = Path(__file__).resolve().parents[1] / "guides"
GUIDE = DEMO / "brookside-boost.md"


def help_text(argv: list[str], capsys) -> str:
    with pytest.raises(SystemExit) as stopped:
        main([*argv, "--help"])
    assert stopped.value.code == 0
    return capsys.readouterr().out


def one_error(argv: list[str], capsys) -> str:
    assert main(argv) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    return err[0]


def test_help_lists_the_commands_in_their_order(capsys):
    listed = help_text([], capsys)
    places = [listed.index(f"    {name} ") for name, _summary in ORDER]
    assert places == sorted(places)


@pytest.mark.parametrize("name", [name for name, _summary in ORDER])
def test_every_argument_has_help(name):
    import_module(f"kitleaf.commands.{name}")
    top = parser(name)
    commands = next(a for a in top._actions if isinstance(a, argparse._SubParsersAction))
    arguments = [a for a in commands.choices[name]._actions if a.dest != "help"]
    assert arguments
    assert all(a.help for a in arguments), [a.dest for a in arguments if not a.help]


def test_proof_help_shows_its_default_port(capsys):
    text = help_text(["proof"], capsys)
    assert "default: 8400" in text and "default: 127.0.0.1" in text


def test_proof_of_a_missing_folder_is_one_line(tmp_path, capsys):
    line = one_error(["proof", str(tmp_path / "nosuch"), "-o", str(tmp_path / "out")], capsys)
    assert line.startswith(f"{tmp_path / 'nosuch'}: error: no such folder")
    assert not (tmp_path / "out").exists()


def test_proof_of_an_empty_folder_stops_instead_of_showing_an_old_site(tmp_path, capsys):
    (tmp_path / "guides").mkdir()
    line = one_error(["proof", str(tmp_path / "guides"), "-o", str(tmp_path / "out")], capsys)
    assert "no guides (*.md)" in line


def test_proof_on_a_taken_port_is_one_line_and_builds_nothing(tmp_path, capsys):
    (tmp_path / "guides").mkdir()
    (tmp_path / "guides" / "a.md").write_bytes(GUIDE.read_bytes())
    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        taken.listen()
        port = taken.getsockname()[1]
        line = one_error(["proof", str(tmp_path / "guides"), "-o", str(tmp_path / "out"),
                          "--port", str(port)], capsys)
    assert line.startswith(f"kitleaf proof: error: cannot listen on 127.0.0.1 port {port}: ")
    assert "another --port" in line
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("jobs", ["0", "-2"])
@pytest.mark.parametrize("name", ["build", "proof"])
def test_jobs_below_one_are_refused(name, jobs, tmp_path, capsys):
    (tmp_path / "guides").mkdir()
    (tmp_path / "guides" / "a.md").write_bytes(GUIDE.read_bytes())
    line = one_error([name, str(tmp_path / "guides"), "-o", str(tmp_path / "out"), "-j", jobs],
                     capsys)
    assert line == f"kitleaf {name}: error: --jobs must be a whole number of 1 or more, got {jobs}"
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("argv", [["--spares", "abc"], ["--spares", "abc", "--kits", "2"],
                                  ["--spares", "10"], ["--spares=-5%", "--kits", "2"]])
def test_bad_spares_are_refused_with_or_without_kits(argv, capsys):
    line = one_error(["bom", str(GUIDE), *argv], capsys)
    assert line.startswith("kitleaf bom: error: --spares must be a percentage of 0% or more")
    assert "tolerance" not in line


def test_spares_without_kits_are_refused(capsys):
    line = one_error(["bom", str(GUIDE), "--spares", "10%"], capsys)
    assert line == ("kitleaf bom: error: --spares applies to a batch order; add --kits N, or "
                    "leave it out")


def test_a_batch_order_as_csv(capsys):
    assert main(["bom", str(GUIDE), "--kits", "3", "--spares", "10%", "--csv"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert rows and set(rows[0]) >= {"quantity", "needed", "spares", "per_kit", "value"}
    for row in rows:
        assert int(row["needed"]) == 3 * int(row["per_kit"])
        assert int(row["quantity"]) == int(row["needed"]) + int(row["spares"])


@pytest.mark.parametrize("flag", ["--names", "--json"])
def test_a_reader_that_closes_early_ends_the_command_quietly(flag):
    proc = subprocess.Popen([sys.executable, "-m", "kitleaf", "specs", str(GUIDE), flag],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    proc.stdout.close()  # as `| head` does once it has its lines
    err = proc.stderr.read()
    proc.stderr.close()
    assert proc.wait(timeout=120) == 141  # 128 + SIGPIPE, as the shell reports a Unix tool
    assert err == b""
