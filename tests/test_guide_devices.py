"""A guide's own device models: ```device blocks read, used by part lines, and checked."""

from __future__ import annotations

import math

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, operating_point, require_ngspice
from tests.stages.kits import guide_text, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE
from kitleaf.engine import solve_ac, solve_dc
from kitleaf.engine.models import get_model
from kitleaf.errors import KitleafError
from kitleaf.guide.parse import parse_guide

BOOST = stage_block(
    "boost", "common-emitter", "input-cap: C1 100n film", "bias-top: R1 1M",
    "bias-bottom: R2 100k", "transistor: Q1 {model}", "collector: R3 10k", "emitter: R4 390",
    "output-cap: C2 1u film")


def device(name: str, *lines: str) -> str:
    return "\n".join([f"```device {name}", *lines, "```", ""])


def kit_with(model: str, *devices: str):
    text = guide_text(*devices, BOOST.format(model=model))
    return build_circuit(parse_guide("fb.md", text)), text


def line_of(text: str, words: str) -> int:
    return next(i for i, line in enumerate(text.splitlines(), start=1) if words in line)


def error_of(model: str, *devices: str) -> KitleafError:
    with pytest.raises(KitleafError) as caught:
        kit_with(model, *devices)
    return caught.value


class TestReading:
    def test_parameters_by_their_spice_names(self):
        kit, _ = kit_with("FB-Q1", device("FB-Q1", "type: npn", "is: 2e-14", "bf: 250",
                                          "cje: 4.5p", "note: hand-picked"))
        model = kit.stages[0].part("transistor").device
        assert (model.kind, model.get("IS"), model.get("BF")) == ("npn", 2e-14, 250.0)
        assert model.get("CJE") == pytest.approx(4.5e-12)
        assert (model.note, model.provenance) == ("hand-picked", "user")

    def test_zero_means_off_where_spice_says_so(self):
        # VAF = 0, IKF = 0: no Early effect, no high-injection roll-off; RS = 0: no series
        # resistance (SPICE3 user's manual, model parameter tables, from memory)
        kit, _ = kit_with("FB-Q1", device("FB-Q1", "type: npn", "vaf: 0", "ikf: 0", "rb: 0"))
        model = kit.stages[0].part("transistor").device
        assert model.get("VAF") == math.inf and model.get("IKF") == math.inf
        assert model.get("RB") == 0.0

    def test_spice_aliases_and_a_library_base(self):
        kit, _ = kit_with("FB-Q1", device("FB-Q1", "from: 2N3904", "va: 40", "spread: BF 150..450"))
        model = kit.stages[0].part("transistor").device
        library = get_model("2N3904")
        assert model.get("VAF") == 40.0 and model.get("IS") == library.get("IS")
        assert dict(model.spread) == {"BF": (150.0, 450.0)}

    def test_the_guide_model_is_what_the_circuit_solves(self):
        kit, _ = kit_with("FB-Q1", device("FB-Q1", "from: 2N3904", "bf: 50"))
        low = solve_dc(kit.netlist()).device("Q1")["beta"]
        kit, _ = kit_with("2N3904")
        assert low < 0.5 * solve_dc(kit.netlist()).device("Q1")["beta"]


class TestWarnings:
    def test_unmodelled_parameters_in_one_located_warning(self):
        kit, text = kit_with("FB-Q1", device("FB-Q1", "type: npn", "bf: 200", "xti: 3",
                                             "eg: 1.11", "kf: 1e-15"))
        (warning,) = (w.line() for w in kit.warnings)
        assert warning.startswith(f"fb.md:{line_of(text, 'xti: 3')}: warning: ")
        assert "XTI, EG, KF are not modelled" in warning and "VAF, VAR, IKF" in warning

    def test_overriding_a_library_model(self):
        kit, text = kit_with("2N3904", device("2N3904", "type: npn", "bf: 120"))
        (warning,) = (w.line() for w in kit.warnings)
        assert warning.startswith(f"fb.md:{line_of(text, '```device 2N3904')}: warning: ")
        assert "replaces the library's 2N3904" in warning
        assert kit.stages[0].part("transistor").device.get("BF") == 120.0
        assert get_model("2N3904").get("BF") != 120.0  # the library itself is untouched

    def test_the_page_shows_both_warnings_at_their_lines(self, tmp_path):
        from tests.site_pages import parse_page

        from kitleaf.site.build import build_site

        text = guide_text(device("2N3904", "type: npn", "bf: 120"),
                          device("FB-Q1", "type: npn", "bf: 200", "xti: 3"),
                          BOOST.format(model="FB-Q1"))
        guides = tmp_path / "guides"
        guides.mkdir()
        (guides / "fb.md").write_text(text, encoding="utf-8")
        build_site(guides, tmp_path / "published", jobs=1, use_cache=False)
        page = parse_page(tmp_path / "published" / "fb" / "index.html")
        shown = [p.all_text() for p in page.find_all("p", "model-warning")]
        assert len(shown) == 2
        assert "replaces the library's 2N3904" in shown[0]
        assert f"(guide line {line_of(text, '```device 2N3904')})" in shown[0]
        assert "XTI is not modelled" in shown[1]
        assert f"(guide line {line_of(text, 'xti: 3')})" in shown[1]


class TestErrors:
    @pytest.mark.parametrize("line, words", [
        ("bf: lots", "cannot read 'lots' as a number"),       # wrong type
        ("fc: 1.5", "FC = 1.5 is outside its range"),          # out of range
        ("is: -1e-14", "IS must be positive"),
        ("rb: 1M", "M means milli to SPICE and mega to SI"),
        ("bff: 100", "did you mean 'bf'"),                     # no parameter at all
        ("bf: 100", "gives BF twice"),
    ])
    def test_bad_parameter_is_located(self, line, words):
        lines = ("type: npn", "bf: 90", line) if line == "bf: 100" else ("type: npn", line)
        text = guide_text(device("FB-Q1", *lines), BOOST.format(model="FB-Q1"))
        with pytest.raises(KitleafError) as caught:
            build_circuit(parse_guide("fb.md", text))
        assert words in caught.value.message
        assert caught.value.span.line == len(lines) + line_of(text, "```device")

    def test_model_used_but_never_defined(self):
        error = error_of("FB-NOPE")
        assert "unknown device model 'FB-NOPE'" in error.message
        assert "define FB-NOPE in a block ```device FB-NOPE" in error.message
        assert error.span.line == line_of(guide_text(BOOST), "transistor:")

    def test_type_or_base_is_needed(self):
        block = device("FB-Q1", "bf: 100")
        error = error_of("FB-Q1", block)
        assert "needs a 'type:' line" in error.message
        assert error.span.line == line_of(guide_text(block), "```device")

    def test_kind_must_fit_the_role(self):
        error = error_of("FB-J1", device("FB-J1", "type: njf", "vto: -1"))
        assert "is an N-channel JFET; this kind takes an NPN BJT or a PNP BJT" in error.message

    @pytest.mark.parametrize("header, words", [
        ("```device", "needs a name after 'device'"),
        ("```device FB Q1", "must be one word"),
    ])
    def test_block_names(self, header, words):
        text = guide_text(header + "\ntype: npn\n```\n", BOOST.format(model="2N3904"))
        with pytest.raises(KitleafError, match=words):
            parse_guide("fb.md", text)

    def test_name_defined_twice(self):
        text = guide_text(device("FB-Q1", "type: npn"), device("fb-q1", "type: pnp"),
                          BOOST.format(model="2N3904"))
        with pytest.raises(KitleafError, match="defined twice") as caught:
            parse_guide("fb.md", text)
        assert caught.value.span.line == line_of(text, "```device fb-q1")


JFET_BUFFER = stage_block(
    "buffer", "jfet-common-source", "input-cap: C5 47n film", "gate: R5 1M",
    "transistor: Q5 FB-N1", "drain: R6 6k8", "source: R7 1k", "source-bypass: C6 10u "
    "electrolytic", "output-cap: C7 220n film", "pulldown: R8 1M")


@pytest.mark.slow
def test_guide_models_round_trip_through_ngspice():
    """A guide's own JFET and NPN (written with SPICE's zeros and an alias), exported with the
    kit and solved by Debian's ngspice: the same DC and the same gain as the engine."""
    require_ngspice()
    devices = (device("FB-N1", "type: njf", "vto: -1.1", "beta: 1.2m", "lambda: 0",
                      "cgs: 4p", "cgd: 1.5p", "kf: 1e-18"),
               device("FB-Q1", "from: 2N3904", "va: 0", "ikf: 0", "bf: 180", "cjc: 5p"))
    kit, _ = kit_with("FB-Q1", *devices, JFET_BUFFER)
    circuit = kit.netlist()
    ours, theirs = solve_dc(circuit), operating_point(circuit)
    for node in circuit.nodes():
        # ngspice oracle: within 1 % or 5 mV, as tests/engine/test_ngspice_oracle.py
        assert ours.voltage(node) == pytest.approx(theirs[node], rel=0.01, abs=5e-3), node
    freqs, spice = ac_sweep(circuit, SOURCE, [INPUT, OUTPUT], 10.0, 100e3, per_decade=20)
    ac = solve_ac(circuit, ours, freqs, SOURCE)
    gain = abs(ac.voltage(OUTPUT) / ac.voltage(INPUT))
    # ngspice oracle: gain within 0.1 dB at every point of the sweep
    assert 20 * abs(np.log10(gain / abs(spice[OUTPUT] / spice[INPUT]))) == pytest.approx(
        0.0, abs=0.1)
