"""Guide parsing: blocks, entries and their 1-based source lines."""

import pytest

from kitleaf.errors import GuideError
from kitleaf.guide import parse_guide

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
