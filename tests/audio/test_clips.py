"""Which clips a kit's page plays."""

from __future__ import annotations

from kitleaf.audio.clips import MAX_CLIPS, clip_plan


def test_each_knob_is_heard_at_both_ends_with_the_rest_at_half():
    plan = clip_plan([("Gain", "MP1"), ("Level", "MP2")])
    assert [s.name for s in plan.settings] == ["all-half", "gain-0", "gain-100", "level-0",
                                               "level-100"]
    assert plan.settings[0].position_map == {"MP1": 0.5, "MP2": 0.5}
    assert plan.settings[2].position_map == {"MP1": 1.0, "MP2": 0.5}
    assert plan.settings[3].label == "Level at 0 %" and plan.left_out == ()


def test_no_more_than_nine_clips_and_the_page_hears_which_knobs_were_left_out():
    knobs = [(f"Knob {i}", f"MP{i}") for i in range(1, 7)]
    plan = clip_plan(knobs)
    assert len(plan.settings) == MAX_CLIPS == 9
    assert plan.left_out == ("Knob 5", "Knob 6")


def test_a_kit_without_knobs_has_one_clip_and_names_stay_files():
    assert [s.label for s in clip_plan([]).settings] == ["As built"]
    plan = clip_plan([("Lével", "MP1"), ("!!!", "MP2"), ("All", "MP3")])
    assert [s.name for s in plan.settings][1::2] == ["level-0", "mp2-0", "all-mp3-0"]
