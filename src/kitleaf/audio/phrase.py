"""The dry test phrase every preview plays: plucked strings made here, no recording.

Each note is a Karplus–Strong plucked string (K. Karplus and A. Strong, "Digital Synthesis of
Plucked-String and Drum Timbres", Computer Music Journal 7(2), 1983): a burst of noise
circulating in a delay line of N samples whose loop averages two neighbouring samples, so the
loop delay is N + 1/2 samples and high harmonics die first. Two of D. A. Jaffe and J. O.
Smith's extensions (same journal issue, "Extensions of the Karplus-Strong Plucked-String
Algorithm") make it sound like a guitar through a pickup rather than a harpsichord: a decay
stretch factor per note, set from the note's ring time, and a pluck-position comb on the
excitation (plucking at a fraction beta of the string removes the harmonics with a node there).

The phrase is our own: five single notes walking up and back, then one strummed chord left to
ring. The noise is seeded, so the same phrase comes out, sample for sample, on every build.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

# Peak of the pickup's own voltage over the phrase: a moderate pickup played firmly (common
# practice, no source); the middle of the three playing levels of the large-signal figures.
PHRASE_PEAK_V = 0.3
PHRASE_SECONDS = 4.0
SEED = 20261205


@dataclass(frozen=True)
class Note:
    start: float  # seconds from the phrase's start
    midi: int  # MIDI note number (A4 = 69 = 440 Hz, the MIDI 1.0 tuning convention)
    ring: float  # seconds for the note to fall 60 dB
    level: float = 1.0  # relative pick strength


# Single notes, then a six-string chord strummed downwards over 40 ms.
PHRASE: tuple[Note, ...] = (
    Note(0.00, 52, 1.2), Note(0.36, 55, 1.2), Note(0.72, 57, 1.2, 0.9),
    Note(1.08, 59, 1.4), Note(1.44, 62, 1.6, 1.1), Note(1.80, 57, 1.8, 0.8),
    *(Note(2.40 + 0.008 * i, midi, 2.6, 0.7) for i, midi in enumerate((40, 47, 52, 55, 59, 64))),
)


def pitch_hz(midi: int) -> float:
    """Equal-tempered pitch of a MIDI note number (A4 = 69 = 440 Hz)."""
    return 440.0 * 2.0 ** ((midi - 69) / 12.0)


def pluck(freq: float, ring: float, rate: float, length: int, rng: np.random.Generator,
          position: float = 0.18) -> np.ndarray:
    """One plucked string at ``freq`` (Hz) sounding for ``length`` samples at ``rate``."""
    period = rate / freq - 0.5  # the averaging loop adds half a sample of delay
    n = max(2, int(round(period)))
    # The loop gain that makes the fundamental fall 60 dB in ``ring`` seconds (Jaffe & Smith's
    # decay factor): per trip around the loop the level falls by 60 dB * trip time / ring.
    rho = min(10.0 ** (-3.0 * (n + 0.5) / (rate * ring)), 0.9999)
    burst = rng.uniform(-1.0, 1.0, n)
    burst -= burst.mean()  # no DC in the excitation, so the string does not drift
    comb = max(1, int(round(position * n)))
    burst = burst - np.concatenate([np.zeros(comb), burst[:-comb]])
    # y[k] = x[k] + rho/2 (y[k-n] + y[k-n-1]): a block of n samples needs only earlier
    # blocks, so the loop runs once per trip around the string, not once per sample.
    y = np.zeros(length + 1)  # y[0] is the silence before the pluck
    y[1:n + 1] = burst[:length]
    for start in range(n + 1, length + 1, n):
        stop = min(start + n, length + 1)
        y[start:stop] += rho / 2.0 * (y[start - n:stop - n] + y[start - n - 1:stop - n - 1])
    return y[1:]


def dry_phrase(rate: float, peak: float = PHRASE_PEAK_V) -> np.ndarray:
    """The phrase as the pickup's own voltage, ``rate`` samples per second, peak ``peak`` V."""
    length = int(round(PHRASE_SECONDS * rate))
    rng = np.random.default_rng(SEED)
    out = np.zeros(length)
    for note in PHRASE:
        start = int(round(note.start * rate))
        if start >= length:  # a phrase cut short (the quick checks) drops the later notes
            continue
        out[start:] += note.level * pluck(pitch_hz(note.midi), note.ring, rate,
                                          length - start, rng)
    # A short fade at the end so the clip stops without a click.
    fade = min(int(0.05 * rate), length // 4)
    out[-fade:] *= np.linspace(1.0, 0.0, fade)
    return out * (peak / np.max(np.abs(out)))
