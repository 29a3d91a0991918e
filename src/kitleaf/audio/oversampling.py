"""How finely a kit is stepped in time: the fewest steps per output sample that keep what its
clipping folds back into the band 60 dB below its output.

Stepping at a finite rate folds every harmonic above half that rate back into the band, where
a clipping stage's harmonics reach far. Each kit is probed with a 997 Hz sine at the phrase's
peak (a tone whose harmonics and their folds fall on different frequencies), at every clip's
setting at once, at two, four, eight and sixteen times the output rate, until everything in
the band that is not a harmonic sums to less than -60 dB of the fundamental. Each setting
gets its own: the demo boosts pass at two, the Alder Drive's Drive at 100 % needs eight.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from kitleaf.audio.encode import RATE
from kitleaf.audio.phrase import PHRASE_PEAK_V
from kitleaf.engine.batch import BatchResult
from kitleaf.engine.transient import transient_response

FACTORS = (2, 4, 8, 16)
LIMIT_DB = -60.0  # what may fold back, summed, relative to the fundamental
PROBE_HZ = 997.0
PROBE_S = 0.1  # the second half is read: the start's settling is mostly over by then
BAND_HZ = (200.0, 20_000.0)  # below, what is left of the settling; above, no one hears it
# Blackman-Harris side lobes are at -92 dB (Harris, Proc. IEEE 66(1), 1978); its main lobe is
# four bins wide each way, 80 Hz over the 50 ms read
HARMONIC_HZ = 100.0


def oversampling(batches: Sequence[BatchResult], source: str, output: str) -> list[int]:
    """Each variant's fewest steps per output sample (of FACTORS) at which it folds back
    less than LIMIT_DB; the most when none is enough. A variant whose steps fail in the
    probe takes the fewest (its clip will fail and say why)."""
    probe = PHRASE_PEAK_V * np.sin(2 * math.pi * PROBE_HZ * np.arange(
        int(PROBE_S * RATE)) / RATE)
    chosen, todo = [FACTORS[-1]] * len(batches), list(range(len(batches)))
    for factor in FACTORS[:-1]:
        if not todo:
            break
        result = transient_response([batches[i] for i in todo], source, probe, RATE, factor,
                                    [output])
        left = []
        for i, ok, wave in zip(todo, result.converged, result.wave(output), strict=True):
            if ok and folded_db(wave, PROBE_HZ) >= LIMIT_DB:
                left.append(i)
            else:
                chosen[i] = factor
        todo = left
    return chosen


def folded_db(wave: np.ndarray, freq: float) -> float:
    """Everything in BAND_HZ that is not a harmonic of ``freq``, summed, in dB of the
    fundamental, over the second half of ``wave`` (sampled at RATE)."""
    from scipy.signal.windows import blackmanharris

    settled = wave[wave.size // 2:]
    spectrum = np.abs(np.fft.rfft(settled * blackmanharris(settled.size)))
    freqs = np.fft.rfftfreq(settled.size, 1.0 / RATE)
    nearest = np.abs(freqs / freq - np.round(freqs / freq)) * freq
    other = (nearest > HARMONIC_HZ) & (freqs > BAND_HZ[0]) & (freqs < BAND_HZ[1])
    # both sides summed over bins, so a tone counts the same wherever it falls between them
    fundamental = math.sqrt(float(np.sum(spectrum[np.abs(freqs - freq) <= HARMONIC_HZ] ** 2)))
    folded = math.sqrt(float(np.sum(spectrum[other] ** 2)))
    return 20.0 * math.log10(max(folded, 1e-300) / max(fundamental, 1e-300))
