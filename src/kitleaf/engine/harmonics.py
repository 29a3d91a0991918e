"""Distortion figures of one period of a waveform: harmonics, THD and the peaks each way."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Distortion:
    """Per waveform (any leading shape): harmonic amplitudes 1..H (volts peak), THD as a
    fraction of the fundamental (every harmonic below the grid's Nyquist counted, never
    capped: a fuzz exceeds 1), the mean, and the peaks above and below the mean."""

    amplitudes: np.ndarray
    thd: np.ndarray
    mean: np.ndarray
    peak_pos: np.ndarray
    peak_neg: np.ndarray

    @property
    def peak(self) -> np.ndarray:
        return np.maximum(self.peak_pos, self.peak_neg)

    def dbc(self) -> np.ndarray:
        """Each harmonic relative to the fundamental, in dB (the fundamental's own is 0)."""
        with np.errstate(divide="ignore"):
            return 20.0 * np.log10(self.amplitudes / self.amplitudes[..., :1])


def distortion(wave: np.ndarray, harmonics: int = 5) -> Distortion:
    """Figures of ``wave`` (..., N), N equally spaced samples over exactly one period."""
    points = wave.shape[-1]
    spectrum = np.abs(np.fft.rfft(wave, axis=-1)) * (2.0 / points)
    top = (points - 1) // 2  # harmonics strictly below the Nyquist bin
    fundamental = spectrum[..., 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        thd = np.sqrt(np.sum(spectrum[..., 2:top + 1] ** 2, axis=-1)) / fundamental
    mean = wave.mean(axis=-1)
    return Distortion(spectrum[..., 1:harmonics + 1], thd, mean, wave.max(axis=-1) - mean,
                      mean - wave.min(axis=-1))
