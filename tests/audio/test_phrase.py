"""The dry test phrase: plucked strings at their pitch, the stated level, the same every time."""

from __future__ import annotations

import numpy as np
import pytest

from kitleaf.audio.phrase import PHRASE, PHRASE_PEAK_V, PHRASE_SECONDS, dry_phrase, pitch_hz, pluck


@pytest.mark.parametrize("midi", [40, 52, 64, 69])
def test_a_plucked_string_sounds_at_its_pitch(midi):
    # Karplus & Strong (Computer Music Journal 7(2), 1983): the averaging loop's delay is N + 1/2
    # samples, so the string sounds at rate / (N + 1/2); with N rounded, within half a sample
    # of the period, about 6 cents at E2 and 48 kHz (a quarter of a semitone would be 25).
    rate, freq = 48_000, pitch_hz(midi)
    y = pluck(freq, 2.0, rate, 4 * rate, np.random.default_rng(1))
    spectrum = np.abs(np.fft.rfft(y * np.hanning(y.size), 16 * y.size))
    bins = np.fft.rfftfreq(16 * y.size, 1 / rate)
    near = (bins > freq / 1.5) & (bins < freq * 1.5)
    found = bins[near][np.argmax(spectrum[near])]
    assert abs(1200 * np.log2(found / freq)) < 7


def test_a_440_hz_a4_is_midi_69():
    # The MIDI 1.0 tuning convention: note 69 is A4 at 440 Hz, 12 notes an octave.
    assert pitch_hz(69) == 440.0 and pitch_hz(81) == 880.0
    assert pitch_hz(40) == pytest.approx(82.4069, abs=1e-4)


def test_a_note_rings_for_its_stated_time():
    # Jaffe & Smith's decay factor: the fundamental falls 60 dB in the note's ring time.
    rate = 48_000
    y = pluck(pitch_hz(52), 1.0, rate, 2 * rate, np.random.default_rng(2))
    window = rate // 20

    def level(at: float) -> float:
        k = int(at * rate)
        return 20 * np.log10(np.sqrt(np.mean(y[k:k + window] ** 2)))

    # Between 0.25 s and 0.75 s the level falls by about half of 60 dB (the averaging loop
    # loses the upper harmonics faster, so a little more than half).
    assert 27 <= level(0.25) - level(0.75) <= 40


def test_the_phrase_has_its_length_its_peak_and_no_dc():
    rate = 96_000
    x = dry_phrase(rate)
    assert x.size == int(PHRASE_SECONDS * rate)
    assert np.max(np.abs(x)) == pytest.approx(PHRASE_PEAK_V)
    assert abs(np.mean(x)) < 0.01 * PHRASE_PEAK_V
    assert x[-1] == 0.0  # faded out, no click at the end
    assert len({n.start for n in PHRASE}) >= 5  # single notes, then the strum


def test_the_phrase_is_the_same_on_every_call():
    assert np.array_equal(dry_phrase(48_000), dry_phrase(48_000))
