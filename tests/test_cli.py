"""The command line: one-line located errors, exit codes, and every broken guide reported."""

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from kitleaf.cli import main

BAD = sorted((Path(__file__).parent / "fixtures" / "bad").glob("*.md"))
DEMO = Path(__file__).parent.parent / "guides"
EXPECT = re.compile(r"<!-- expect: (\d+): (.*) -->")


def expectation(path: Path) -> tuple[int, str]:
    """Each broken guide declares, on its first line, the line and words its error must have."""
    match = EXPECT.match(path.read_text(encoding="utf-8").splitlines()[0])
    assert match, f"{path.name} lacks its expect line"
    return int(match[1]), match[2]


@pytest.mark.parametrize("path", BAD, ids=[p.stem for p in BAD])
def test_bad_guide_gives_one_located_line(path, capsys):
    line, words = expectation(path)
    assert main(["check", str(path)]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert err[0].startswith(f"{path}:{line}: error: "), err[0]
    assert words in err[0]
    assert "Traceback" not in err[0]


def test_check_reports_every_broken_guide(tmp_path, capsys):
    for path in BAD[:3]:
        (tmp_path / path.name).write_text(path.read_text(encoding="utf-8"), encoding="utf-8")
    assert main(["check", str(tmp_path)]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 3
    assert {e.split(":")[0] for e in err} == {str(tmp_path / p.name) for p in BAD[:3]}


def test_check_passes_the_demo(capsys):
    assert main(["check", str(DEMO)]) == 0


def test_failed_build_keeps_the_previous_site(tmp_path, capsys):
    guides = tmp_path / "guides"
    guides.mkdir()
    good = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    (guides / "a.md").write_text(good, encoding="utf-8")
    out = tmp_path / "published"
    assert main(["build", str(guides), "-o", str(out)]) == 0
    before = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    (guides / "a.md").write_text(good.replace("R3 8k2", "R3 8q2"), encoding="utf-8")
    assert main(["build", str(guides), "-o", str(out)]) == 1
    after = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert after == before
    assert "a.md" in capsys.readouterr().err


def test_specs_json_has_the_documented_fields(capsys):
    assert main(["specs", str(DEMO / "heron-opamp-boost.md"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["schema"].startswith("kitleaf-specs/")
    gain = next(s for s in data["stages"] if s["id"] == "gain")
    for key in ("dc_voltages", "gain_db_1khz_by_knob", "low_corner_hz", "high_corner_hz",
                "input_impedance_ohm_1khz", "output_impedance_ohm_1khz", "supply_current_ma"):
        assert key in gain
    knobs = [p["knobs"] for p in gain["gain_db_1khz_by_knob"]]
    assert {"Gain": 0.0} in knobs and {"Gain": 1.0} in knobs


def test_new_guide_checks_clean(tmp_path, capsys):
    assert main(["new", "Moss Drive", "--dir", str(tmp_path)]) == 0
    written = tmp_path / "moss-drive.md"
    assert written.is_file()
    capsys.readouterr()
    assert main(["check", str(written), "--fail-on-findings"]) == 0  # no finding to silence
    assert capsys.readouterr().err == ""
    assert "allow:" not in written.read_text(encoding="utf-8")
    assert main(["new", "Moss Drive", "--dir", str(tmp_path)]) == 1


def test_specs_names_lists_what_prose_can_use(capsys):
    assert main(["specs", str(DEMO / "brookside-boost.md"), "--names"]) == 0
    rows = capsys.readouterr().out.splitlines()
    names = {row.split()[0] for row in rows}
    assert {"kit.gain", "kit.current", "boost.q1.collector", "r3"} <= names
    # Every value is written with its unit: a number, then dB or an SI prefix and unit.
    value = re.compile(r"^-?[\d.]+ (dB|[pnµmkM]?(Hz|Ω|A|V|F|H))( |$)")
    for row in rows:
        assert value.match(re.split(r"\s{2,}", row)[1]), row


def test_a_zero_kit_batch_is_a_clear_error(capsys):
    assert main(["bom", str(DEMO / "brookside-boost.md"), "--kits", "0"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert err == ["kitleaf bom: error: the number of kits must be a whole number of 1 or more, "
                   "got 0"]


def findings_guides(tmp_path: Path, findings: bool) -> Path:
    """Two demo guides; with ``findings`` the first loses its ``allow:`` lines, so its two
    design-rule findings (input impedance, coupling corner) are no longer silenced."""
    guides = tmp_path / "guides"
    guides.mkdir()
    text = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    if findings:
        text = "".join(line for line in text.splitlines(keepends=True)
                       if not line.startswith("allow: "))
    (guides / "a.md").write_text(text, encoding="utf-8")
    (guides / "b.md").write_bytes((DEMO / "heron-opamp-boost.md").read_bytes())
    return guides


def count_solves(monkeypatch) -> list[str]:
    """Every call of derive_specs (the kit solved at each knob position and supply) by the
    build and by the check, by guide file name."""
    import kitleaf.commands.check
    import kitleaf.site.guide_output

    calls: list[str] = []
    for module in (kitleaf.commands.check, kitleaf.site.guide_output):
        solve = module.derive_specs

        def counted(guide, kit, solved=None, _solve=solve):
            calls.append(Path(guide.path).name)
            return _solve(guide, kit, solved)

        monkeypatch.setattr(module, "derive_specs", counted)
    return calls


def test_fail_on_findings_build_stops_at_a_finding_as_check_does(tmp_path, capsys, monkeypatch):
    guides, out = findings_guides(tmp_path, findings=True), tmp_path / "published"
    assert main(["build", str(guides), "-o", str(out)]) == 0  # findings are warnings here
    before = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    capsys.readouterr()
    solves = count_solves(monkeypatch)
    assert main(["build", str(guides), "-o", str(out), "--fail-on-findings", "-j", "1",
                 "--no-cache"]) == 1
    assert sorted(solves) == ["a.md", "b.md"]  # each guide solved once, by the build alone
    built = capsys.readouterr().err.strip().splitlines()
    assert {p: p.read_bytes() for p in out.rglob("*") if p.is_file()} == before
    assert main(["check", str(guides), "--fail-on-findings"]) == 1
    checked = capsys.readouterr().err.strip().splitlines()
    assert len(checked) == 2 and all(f"{guides / 'a.md'}:" in line for line in checked)
    assert built[:-1] == checked  # the same lines, in the same order
    assert built[-1].startswith("kitleaf: 1 guide(s) failed (--fail-on-findings")
    assert "the published site is untouched" in built[-1] and "Traceback" not in "".join(built)


def test_fail_on_findings_build_of_clean_guides_publishes_after_one_solve_each(
        tmp_path, capsys, monkeypatch):
    guides, out = findings_guides(tmp_path, findings=False), tmp_path / "published"
    solves = count_solves(monkeypatch)
    assert main(["build", str(guides), "-o", str(out), "--fail-on-findings", "-j", "1"]) == 0
    assert sorted(solves) == ["a.md", "b.md"]
    assert (out / "index.html").is_file() and (out / "kitleaf-manifest.json").is_file()
    assert "0 warning(s)" in capsys.readouterr().out


def test_fail_on_findings_build_lists_findings_beside_another_guides_error(tmp_path, capsys):
    # b.md is broken, a.md has two findings: the build names all three, as check does
    guides, out = findings_guides(tmp_path, findings=True), tmp_path / "published"
    broken = guides / "b.md"
    broken.write_text(broken.read_text().replace("kind: opamp-non-inverting",
                                                 "kind: no-such-kind"))
    assert main(["build", str(guides), "-o", str(out), "--fail-on-findings", "-j", "1"]) == 1
    built = capsys.readouterr().err.strip().splitlines()
    assert main(["check", str(guides), "--fail-on-findings"]) == 1
    checked = capsys.readouterr().err.strip().splitlines()
    assert sum(f"{guides / 'a.md'}:" in line for line in built) == 2
    assert sum(f"{guides / 'b.md'}:" in line for line in built) == 1
    assert sorted(built[:-1]) == sorted(line for line in checked if line.startswith(str(guides)))


def test_the_commands_and_flags_are_kitleafs_own(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    listed = capsys.readouterr().out
    assert "proof" in listed and "serve" not in listed
    for argv in (["serve"], ["check", "--strict"], ["build", "--strict"],
                 ["proof", "--host", "0.0.0.0"]):
        with pytest.raises(SystemExit) as stopped:
            main(argv)
        assert stopped.value.code == 2, argv  # argparse: no such command or option
    capsys.readouterr()


def test_build_publishes_into_published_by_default(tmp_path, capsys, monkeypatch):
    (tmp_path / "guides").mkdir()
    (tmp_path / "guides" / "a.md").write_bytes((DEMO / "brookside-boost.md").read_bytes())
    monkeypatch.chdir(tmp_path)
    assert main(["build"]) == 0
    assert (tmp_path / "published" / "index.html").is_file()
    assert (tmp_path / "published" / "kitleaf-manifest.json").is_file()
    assert not (tmp_path / "site").exists()
    assert "into published/" in capsys.readouterr().out


def test_a_long_word_is_cut_in_the_error_line(tmp_path, capsys):
    good = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    path = tmp_path / "long.md"
    path.write_text(good.replace("R3 8k2", "R3 8k2 " + "x" * 200_000), encoding="utf-8")
    assert main(["check", str(path)]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith(f"{path}:")
    assert len(err[0]) < 400 and "x…[2000" in err[0]


def test_a_long_path_in_an_error_line_is_kept_whole(tmp_path, capsys):
    deep = tmp_path.joinpath(*["folder-with-a-long-name"] * 6)
    deep.mkdir(parents=True)
    missing = deep / "guides"
    assert main(["check", str(missing)]) == 1
    err = capsys.readouterr().err
    assert f"no such folder or guide: {missing};" in err and "characters]" not in err


def test_a_knob_named_with_accents_keeps_its_letters_in_names(tmp_path, capsys):
    # The Brookside's prose shows {=kit.gain.level-100}: with the knob spelt 'Lével' the name
    # is still 'level', not 'l-vel'.
    good = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    path = tmp_path / "accent.md"
    path.write_text(good.replace("knob: Level = VR1", "knob: Lével = VR1"), encoding="utf-8")
    assert main(["check", str(path)]) == 0, capsys.readouterr().err

def test_build_and_check_print_every_warning_at_its_line(tmp_path, capsys):
    # A 10 MΩ collector resistor saturates the Brookside's transistor: the specs' note (no
    # room to swing) and the rule's finding are both warnings with the guide's path and line.
    guides = tmp_path / "guides"
    guides.mkdir()
    good = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    text = re.sub(r"claim: (q1|gain)\..*\n", "", good.replace("R3 8k2", "R3 10M"))
    (guides / "a.md").write_text(text, encoding="utf-8")
    assert main(["check", str(guides)]) == 0
    checked = capsys.readouterr().err.strip().splitlines()
    assert main(["build", str(guides), "-o", str(tmp_path / "out")]) == 0
    built = capsys.readouterr().err.strip().splitlines()
    stage_line = text.splitlines().index("```stage boost") + 1
    note = f"{guides / 'a.md'}:{stage_line}: warning: stage 'boost': Q1 collector"
    for printed in (checked, built):
        assert any(line.startswith(note) for line in printed), printed
        assert all(re.match(rf"{re.escape(str(guides / 'a.md'))}:\d+: warning: ", line)
                   for line in printed), printed


def test_a_numeric_warning_in_the_solve_is_a_located_error(monkeypatch, capsys):
    import numpy as np

    import kitleaf.specs.derive as derive

    def overflowing(guide, kit, solved):
        return np.float64(1e308) * 10.0

    monkeypatch.setattr(derive, "_derive", overflowing)
    path = DEMO / "brookside-boost.md"
    assert main(["check", str(path)]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert err == [f"{path}:1: error: the numbers ran out of range while solving (overflow "
                   "encountered in scalar multiply); look for a part value or device far from "
                   "the usual"]


@pytest.mark.parametrize("argv", [["build", "nosuch"], ["check", "nosuch"]])
def test_a_missing_folder_is_named_without_a_line(argv, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert err == ["nosuch: error: no such folder or guide: nosuch; give a folder of .md guides"]


def test_an_empty_folder_is_named_without_a_line(tmp_path, capsys):
    assert main(["check", str(tmp_path)]) == 1
    assert capsys.readouterr().err.startswith(f"{tmp_path}: error: no guides (*.md) in")


@pytest.mark.parametrize("command", ["check", "build"])
def test_two_kits_with_one_code_are_a_located_error_naming_both(command, tmp_path, capsys):
    guides = tmp_path / "guides"
    guides.mkdir()
    text = (DEMO / "brookside-boost.md").read_text(encoding="utf-8")
    (guides / "a.md").write_text(text, encoding="utf-8")
    (guides / "b.md").write_text("\n" + text.replace("code: FB-101", "code: fb-101"),
                                 encoding="utf-8")
    line = text.splitlines().index("code: FB-101") + 1
    out = tmp_path / "published"
    assert main([command, str(guides), "-o", str(out)][: 2 if command == "check" else 4]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert f"{guides / 'b.md'}:{line + 1}: error: the kit code fb-101 is also the code of " \
           f"a.md (line {line}); give each kit its own code" in err
    assert not out.exists()


def test_escape_sequences_in_a_file_name_are_shown_escaped(tmp_path, capsys):
    path = tmp_path / "clear\x1b[2J.md"
    path.write_text("# no kit block here\n", encoding="utf-8")
    assert main(["check", str(path)]) == 1
    err = capsys.readouterr().err
    assert "clear\\x1b[2J.md:1: error: " in err and "\x1b" not in err


def test_commands_run_blas_on_one_thread(tmp_path, monkeypatch):
    # BLAS helper threads only wait on one another on the engine's matrices (measured: a
    # 200-resistor ladder checked in 20 s with them, 0.5 s without, on two shared cores)
    import kitleaf.cli as cli

    for name in cli.BLAS_THREADS:
        monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("MKL_NUM_THREADS", "3")  # the user's own choice stays
    main(["check", str(tmp_path)])
    assert [os.environ[n] for n in cli.BLAS_THREADS] == ["1", "1", "3"]


def test_the_command_line_loads_numpy_only_after_setting_threads():
    code = "import sys, kitleaf.cli; print('numpy' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "False"


def test_new_guides_with_the_same_initials_get_their_own_codes(tmp_path, capsys):
    for name in ("Fern Fuzz", "Fast Fuzz"):
        assert main(["new", name, "--dir", str(tmp_path)]) == 0
    assert main(["check", str(tmp_path), "--fail-on-findings"]) == 0, capsys.readouterr().err
    assert "code: FF-2" in (tmp_path / "fast-fuzz.md").read_text(encoding="utf-8")
