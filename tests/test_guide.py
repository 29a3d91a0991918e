"""Guide parsing: blocks, entries and their 1-based source lines."""

import pytest

from kitleaf.errors import GuideError
from kitleaf.guide import parse_guide
from kitleaf.guide.slug import slug_for
from kitleaf.guide.source import LARGEST_GUIDE

GUIDE = """\
# A test kit

Some prose.

```kit
title: Test Boost
code: TB-1
supply: 9 V
knob: Level = VR1
hardware: J1 input jack, 6.35 mm mono
caution: Mind the sharp enclosure edges.
```

More prose.

```stage boost
kind: common-emitter
title: The boost
collector: R3 10k   # a comment
emitter: R4 390 1%
```
"""


def parse(text):
    return parse_guide("guides/test.md", text)


class TestBlocks:
    def test_kit_fields(self):
        kit = parse(GUIDE).kit
        assert (kit.title, kit.code, kit.supply, kit.revision) == ("Test Boost", "TB-1", "9 V", "A")
        assert kit.knobs[0].name == "Level" and kit.knobs[0].designator == "VR1"
        assert kit.hardware[0].designator == "J1"
        assert kit.hardware[0].description == "input jack, 6.35 mm mono"
        assert kit.cautions == ("Mind the sharp enclosure edges.",)

    def test_stage_entries_carry_their_lines(self):
        stage = parse(GUIDE).stages[0]
        assert (stage.id, stage.kind, stage.title) == ("boost", "common-emitter", "The boost")
        assert stage.span.line == 16 and stage.kind_span.line == 17
        lines = {e.key: (e.value, e.span.line) for e in stage.entries}
        assert lines == {"collector": ("R3 10k", 19), "emitter": ("R4 390 1%", 20)}

    def test_sound_previews_are_asked_for_on_or_off_and_off_by_default(self):
        assert parse(GUIDE).kit.sound_previews is False
        on = GUIDE.replace("supply: 9 V\n", "supply: 9 V\nsound-previews: on\n")
        assert parse(on).kit.sound_previews is True
        with pytest.raises(GuideError, match="neither on nor off") as raised:
            parse(on.replace("sound-previews: on", "sound-previews: maybe"))
        assert raised.value.span.line == 9

    def test_other_code_blocks_are_prose(self):
        guide = parse(GUIDE + "\n```text\nkind: nothing\n```\n")
        assert len(guide.stages) == 1


class TestMistakes:
    @pytest.mark.parametrize(
        "text, line, words",
        [
            ("```kit\ntitle: X\ncode: X-1\n```\n", 1, "no 'supply:' line"),
            ("# no kit\n", 1, "no kit block"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\ncolour: red\n```\n", 5, "no key 'colour'"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\nthis is wrong\n```\n", 5, "'key: value'"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\nknob: Gain\n```\n", 5, "'Gain = VR1'"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\n```\n```stage\nkind: x\n```\n", 6,
             "needs an id"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\n```\n```stage Boost\nkind: x\n```\n", 6,
             "lower-case"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\n```\n```stage a\ntitle: x\n```\n", 6,
             "no 'kind:' line"),
            ("```kit\ntitle: X\ncode: X\nsupply: 9 V\n```\n```stage a\nkind: x\n```\n"
             "```stage a\nkind: y\n```\n", 9, "used twice"),
        ],
    )
    def test_error_names_the_line(self, text, line, words):
        with pytest.raises(GuideError) as info:
            parse(text)
        assert info.value.span.line == line
        assert words in info.value.message
        assert str(info.value).startswith(f"guides/test.md:{line}: error: ")

    def test_error_survives_pickling(self):
        import pickle

        with pytest.raises(GuideError) as info:
            parse("# nothing\n")
        copy = pickle.loads(pickle.dumps(info.value))
        assert str(copy) == str(info.value)


class TestHostileFiles:
    """What a text editor, a wrong file or a careless save can hand the parser."""

    def test_byte_order_mark_is_read_past(self, tmp_path):
        path = tmp_path / "bom.md"
        path.write_bytes(b"\xef\xbb\xbf" + GUIDE.encode("utf-8"))
        guide = parse_guide(path)
        assert guide.kit.title == "Test Boost" and guide.stages[0].span.line == 16

    def test_non_utf8_byte_is_reported_at_its_own_line(self, tmp_path):
        path = tmp_path / "latin.md"
        path.write_bytes(GUIDE.replace("More prose.", "Caf\xe9 prose.").encode("latin-1"))
        with pytest.raises(GuideError, match="byte 0xe9 is not UTF-8") as info:
            parse_guide(path)
        assert info.value.span.line == 14

    @pytest.mark.parametrize("ending", ["\r", "\r\n"], ids=["cr", "crlf"])
    def test_old_and_windows_line_ends_keep_every_line_number(self, tmp_path, ending):
        path = tmp_path / "ends.md"
        path.write_bytes(GUIDE.replace("\n", ending).encode("utf-8"))
        assert parse_guide(path).stages[0].span.line == 16
        latin = GUIDE.replace("More prose.", "Caf\xe9 prose.").replace("\n", ending)
        path.write_bytes(latin.encode("latin-1"))
        with pytest.raises(GuideError) as info:
            parse_guide(path)
        assert info.value.span.line == 14

    def test_binary_file_is_refused_at_its_first_nul(self, tmp_path):
        path = tmp_path / "binary.md"
        path.write_bytes(b"```kit\ntitle: X\n\x00\x01\x02")
        with pytest.raises(GuideError, match="NUL") as info:
            parse_guide(path)
        assert info.value.span.line == 3

    def test_huge_file_is_refused_unread(self, tmp_path):
        path = tmp_path / "huge.md"
        path.write_bytes(GUIDE.encode("utf-8") + b"x" * LARGEST_GUIDE)
        with pytest.raises(GuideError, match="too large for a guide") as info:
            parse_guide(path)
        assert info.value.span.line == 1

    def test_empty_file_has_no_kit_block(self, tmp_path):
        path = tmp_path / "empty.md"
        path.write_bytes(b"")
        with pytest.raises(GuideError, match="no kit block"):
            parse_guide(path)

    def test_a_tab_may_separate_stage_and_id(self):
        stage = parse(GUIDE.replace("```stage boost", "```stage\tboost")).stages[0]
        assert stage.id == "boost"

    @pytest.mark.parametrize("info", ["text", "js", "sh", "python", "c", "stan"])
    def test_code_samples_stay_prose(self, info):
        assert len(parse(GUIDE + f"\n```{info}\nkind: nothing\n```\n").stages) == 1


class TestKnobNames:
    @pytest.mark.parametrize(("name", "expected"), [
        ("Lével", "level"), ("Mid Boost", "mid-boost"), ("Größe", "grosse"),
        ("Ton (Höhen)", "ton-hohen"),
    ])
    def test_accents_are_dropped_from_the_name_part(self, name, expected):
        assert slug_for(name) == expected

    def test_a_knob_with_no_plain_letter_is_refused(self):
        with pytest.raises(GuideError, match="needs a letter a-z") as info:
            parse(GUIDE.replace("knob: Level = VR1", "knob: Громкость = VR1"))
        assert info.value.span.line == 9
