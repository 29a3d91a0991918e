"""The pinpoint command: rankings a builder can act on, and bad input as one line."""

import json

import pytest

from kitleaf.cli import main
from kitleaf.engine import Circuit, solve_dc
from kitleaf.faults.inject import faulted_circuit
from kitleaf.faults.probes import METER_OHMS

from .kits import GUIDES, kit, readings

BROOKSIDE = str(GUIDES / "brookside-boost.md")


def bench_readings(name: str, key: str, points: list[str]) -> list[str]:
    """What a 10 Mohm meter shows on the fault built in (black on the supply's negative)."""
    r = readings(name)
    plain = faulted_circuit(kit(name), r.faults[r.index(key)])
    words = []
    for probe in (p for p in r.probes if p.name in points):
        c = Circuit()
        for e in plain.elements:
            c.add(e)
        volts = solve_dc(c.resistor("METER", probe.node, "0", METER_OHMS)).voltage(probe.node)
        words.append(f"{probe.name}={volts:.2f}")
    return words


class TestRanking:
    def test_an_open_emitter_resistor_comes_first(self, capsys):
        words = bench_readings("brookside-boost", "R4:open",
                               ["boost.q1.collector", "boost.q1.emitter", "boost.q1.base"])
        assert main(["pinpoint", BROOKSIDE, *words]) == 0
        out = capsys.readouterr().out
        assert "do not fit a good build" in out
        assert out.split("Most likely:")[1].strip().startswith("1.")
        assert "R4 (1.5 kΩ) open" in out.split("Most likely:")[1].strip().splitlines()[0]

    def test_good_readings_fit_a_good_build(self, capsys):
        words = bench_readings("brookside-boost", "good", ["power.vcc", "boost.q1.collector",
                                                           "boost.q1.emitter"])
        assert main(["pinpoint", BROOKSIDE, *words]) == 0
        assert "These readings fit a good build" in capsys.readouterr().out

    def test_where_the_black_probe_went_decides_a_missing_ground_wire(self, capsys):
        # from the supply's negative, a board with no ground wire reads the supply everywhere
        words = ["power.vcc=9.00", "boost.q1.collector=8.99"]
        assert main(["pinpoint", BROOKSIDE, *words, "--json"]) == 0
        first = json.loads(capsys.readouterr().out)["candidates"][0]
        assert first["fault"] == "wire:ground"
        # from board ground it reads nothing at all, as a missing supply wire does
        words = ["power.vcc=0", "boost.q1.collector=0"]
        assert main(["pinpoint", BROOKSIDE, *words, "--black", "ground", "--json"]) == 0
        first = json.loads(capsys.readouterr().out)["candidates"][0]
        assert {first["fault"], *first["reads_the_same_as"]} >= {"wire:ground", "wire:supply"}

    def test_json_carries_the_readings_and_probabilities(self, capsys):
        assert main(["pinpoint", BROOKSIDE, "boost.q1.emitter=0", "--json", "--top", "3"]) == 0
        data = json.loads(capsys.readouterr().out)
        assert data["readings"] == {"boost.q1.emitter": 0.0}
        assert data["black_probe"] == "supply" and len(data["candidates"]) == 3
        assert sum(c["probability"] for c in data["candidates"]) <= 1.0 + 1e-9
        assert set(data["candidates"][0]) == {"fault", "kind", "part", "text", "probability",
                                              "reads", "reads_the_same_as"}

    def test_points_lists_every_test_point(self, capsys):
        assert main(["pinpoint", BROOKSIDE, "--points"]) == 0
        out = capsys.readouterr().out
        assert [line.split()[0] for line in out.splitlines()] == [
            p.name for p in readings("brookside-boost").probes]


@pytest.mark.parametrize("words, says", [
    ([], "no readings given"),
    (["boost.q7.collector=4.5"], "there is no test point 'boost.q7.collector'"),
    (["boost.q1.collector=four"], "is not a number of volts"),
    (["boost.q1.collector=45"], "beyond what the 9 V supply can give"),
    (["boost.q1.collector"], "write a reading as TEST-POINT=VOLTS"),
])
def test_bad_readings_give_one_line_and_exit_1(words, says, capsys):
    assert main(["pinpoint", BROOKSIDE, *words]) == 1
    captured = capsys.readouterr()
    err = captured.err.strip().splitlines()
    assert len(err) == 1 and "Traceback" not in captured.err
    assert err[0].startswith("kitleaf pinpoint: error: ") and says in err[0]
    assert captured.out == ""


def test_readings_in_other_forms(capsys):
    assert main(["pinpoint", BROOKSIDE, "boost.q1.emitter=850mV", "BOOST.Q1.BASE=-0.1",
                 "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["readings"] == {"boost.q1.emitter": pytest.approx(0.85),
                                "boost.q1.base": -0.1}


def test_the_report_says_where_the_switches_rest(capsys):
    # the fault board is the kit with its knobs half way and each switch where the kit block's
    # '*' rests it (Clip at off here), so the readings only hold there
    guide = GUIDES.parent / "tests" / "fixtures" / "pages" / "switch-and-trimmer.md"
    assert main(["pinpoint", str(guide), "power.vcc=9.0"]) == 0
    assert "knobs at half way, Clip set to off." in capsys.readouterr().out
