"""Encoded clips: readable Ogg Vorbis, small, and the same bytes for the same sound."""

from __future__ import annotations

import io

import numpy as np
import pytest

from kitleaf.audio.encode import RATE, decode_clip, encode_clip, ogg_crc, ogg_pages
from kitleaf.audio.phrase import dry_phrase

soundfile = pytest.importorskip("soundfile")


def test_the_page_crc_agrees_with_the_encoders_own():
    # libsndfile writes each page's CRC itself (RFC 3533 section 6: polynomial 0x04c11db7,
    # computed with the CRC field zeroed); ours must give the same value for every page.
    buffer = io.BytesIO()
    soundfile.write(buffer, np.zeros(RATE, np.float32), RATE, format="OGG", subtype="VORBIS")
    pages = ogg_pages(buffer.getvalue())
    assert len(pages) >= 3
    for page in pages:
        assert ogg_crc(page[:22] + bytes(4) + page[26:]) == int.from_bytes(page[22:26], "little")


def test_the_same_sound_gives_the_same_bytes_and_another_sound_other_bytes():
    x = dry_phrase(RATE) * 2
    assert encode_clip(x) == encode_clip(x)
    assert encode_clip(x) != encode_clip(x * 0.5)


def test_a_clip_decodes_to_its_sound():
    x = dry_phrase(RATE) * 2
    y, rate = decode_clip(encode_clip(x))
    assert rate == RATE and y.size == x.size
    # A lossy codec keeps the level (within 0.5 dB: it drops some of the pluck's top octave)
    # and the waveform's shape, not every sample.
    rms = np.sqrt(np.mean(y ** 2)) / np.sqrt(np.mean(x ** 2))
    assert abs(20 * np.log10(rms)) < 0.5
    assert np.corrcoef(x, y)[0, 1] > 0.9


def test_a_four_second_clip_fits_in_60_kb_even_when_hard_clipped():
    x = np.tanh(40 * dry_phrase(RATE)) * 0.9  # a fuzz's square-ish wave, the hardest case
    assert len(encode_clip(x)) <= 60_000
