"""A kit's sound previews: its clips rendered, levelled together and encoded, with their levels.

Every clip of a kit shares one gain from volts at the output jack to the file's full scale, so
the kit's own loudness differences (a Level knob at 0 % is quiet) stay audible; that gain puts
the loudest clip's peak at HEADROOM_DBFS. The bypass clip is the dry phrase scaled to the RMS
level of the every-knob-at-half clip (level-matched), at the same full-scale gain; when that
clip could not be made, or is silent, there is nothing to match, and the bypass clip plays
the phrase at the pickup's own level and says so.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from kitleaf.audio.clips import ClipPlan, ClipSetting
from kitleaf.audio.encode import RATE, encode_clip
from kitleaf.audio.phrase import PHRASE_PEAK_V
from kitleaf.values import format_value

BYPASS = ClipSetting("bypass", "Bypass (level-matched)", ())
# the bypass clip beside a reference clip that is missing or silent: why it is not matched
UNMATCHED = {True: "could not be made", False: "is silent"}
HEADROOM_DBFS = -1.0  # the loudest clip's peak, below full scale so no decoder clips it
# Silence at the output: below this RMS a clip has no level to match the bypass to.
SILENT_V = 1e-6


@dataclass(frozen=True)
class Rendered:
    """One setting's output at the jack (volts at RATE), or why there is none."""

    setting: ClipSetting
    volts: np.ndarray | None
    reason: str = ""
    stage: str = ""  # the stage whose solve failed, '' when none (or none could be named)


@dataclass(frozen=True)
class ClipView:
    """What the page shows for one clip."""

    name: str
    label: str
    file: str | None  # the clip's file name beside the page, None when it could not be made
    peak_v: float | None
    rms_v: float | None
    reason: str = ""
    stage: str = ""

    @property
    def level_text(self) -> str:
        if self.peak_v is None or self.rms_v is None:
            return ""
        db = 20.0 * np.log10(max(self.rms_v, 1e-12))
        return (f"at the output: peak {format_value(self.peak_v, 'voltage')}, RMS "
                f"{format_value(self.rms_v, 'voltage')} ({db:.1f} dBV)")


@dataclass(frozen=True)
class Previews:
    clips: tuple[ClipView, ...]
    files: tuple[tuple[str, bytes], ...]  # (file name, Ogg bytes)
    left_out: tuple[str, ...]
    drive_text: str = format_value(PHRASE_PEAK_V, "voltage")
    matched: bool = True  # the bypass clip is level-matched to the reference clip


Renderer = Callable[[Sequence[ClipSetting], np.ndarray], Sequence[Rendered]]


def make_previews(plan: ClipPlan, dry: np.ndarray, render: Renderer, folder: str) -> Previews:
    """Render ``plan``'s settings with ``render`` (the dry phrase ``dry`` in volts at RATE
    in, output volts out) and encode them, with the bypass clip first; the files are named
    ``folder/NAME.ogg``."""
    rendered = list(render(plan.settings, dry))
    made = [r for r in rendered if r.volts is not None]
    reference = next((r for r in made if r.setting is plan.settings[0]), None)
    ref_rms = _rms(reference.volts) if reference is not None else 0.0
    matched = ref_rms > SILENT_V
    bypass = dry * (ref_rms / _rms(dry)) if matched else dry
    setting = BYPASS if matched else ClipSetting(BYPASS.name, (
        f"Bypass (not level-matched: the clip '{plan.settings[0].label}' "
        f"{UNMATCHED[reference is None]})"), ())
    loudest = max([np.max(np.abs(r.volts)) for r in made] + [np.max(np.abs(bypass))])
    gain = 10.0 ** (HEADROOM_DBFS / 20.0) / loudest if loudest > 0 else 1.0
    views, files = [], []
    for r in [Rendered(setting, bypass), *rendered]:
        name, label = r.setting.name, r.setting.label
        if r.volts is None:
            views.append(ClipView(name, label, None, None, None, r.reason, r.stage))
            continue
        file = f"{folder}/{name}.ogg"
        files.append((file, encode_clip(r.volts * gain, RATE)))
        views.append(ClipView(name, label, file, float(np.max(np.abs(r.volts))), _rms(r.volts)))
    return Previews(tuple(views), tuple(files), plan.left_out, matched=matched)


def _rms(x: np.ndarray) -> float:
    return float(np.sqrt(np.mean(np.square(x))))
