"""A clip as Ogg Vorbis bytes, the same bytes on every build.

libsndfile (through its Python binding, soundfile) encodes; every browser of the last years
plays Ogg Vorbis in a plain ``<audio>`` element. The encoder picks a random stream serial number
for each file (RFC 3533, section 6: it must be unique within a physical stream), which is the
only thing that differs between two encodings of the same samples; kitleaf sets it to a number
made from the samples and writes each page's CRC again, so a clip's bytes depend on its sound
alone.
"""

from __future__ import annotations

import hashlib
import io

import numpy as np

RATE = 48_000
# Vorbis quality as libsndfile's compression level (0 best, 1 smallest): 0.6 keeps a 4 s mono
# clip of the phrase well under 60 kB while the hiss of a fuzz stays hiss.
COMPRESSION = 0.6
_CAPTURE = b"OggS"
_HEADER = 27  # bytes of an Ogg page header before its segment table (RFC 3533, section 6)


def _crc_table() -> np.ndarray:
    # The Ogg CRC: polynomial 0x04c11db7, no reflection, initial value 0 (RFC 3533, section 6).
    table = np.zeros(256, dtype=np.uint32)
    for byte in range(256):
        r = byte << 24
        for _ in range(8):
            r = ((r << 1) ^ 0x04C11DB7) if r & 0x80000000 else (r << 1)
        table[byte] = r & 0xFFFFFFFF
    return table


_TABLE = [int(x) for x in _crc_table()]


def ogg_crc(page: bytes) -> int:
    """The CRC of one Ogg page, computed with its CRC field as zeros."""
    crc = 0
    for byte in page:
        crc = ((crc << 8) & 0xFFFFFFFF) ^ _TABLE[((crc >> 24) ^ byte) & 0xFF]
    return crc


def ogg_pages(data: bytes) -> list[bytes]:
    """The pages of an Ogg stream, in order."""
    pages, at = [], 0
    while at < len(data):
        if data[at:at + 4] != _CAPTURE:
            raise ValueError(f"no Ogg page at byte {at}")
        count = data[at + 26]
        size = _HEADER + count + sum(data[at + _HEADER:at + _HEADER + count])
        pages.append(data[at:at + size])
        at += size
    return pages


def with_serial(data: bytes, serial: int) -> bytes:
    """The stream ``data`` with every page's serial number set to ``serial``, CRCs rewritten."""
    out = []
    for page in ogg_pages(data):
        blank = page[:14] + serial.to_bytes(4, "little") + page[18:22] + b"\0\0\0\0" + page[26:]
        out.append(blank[:22] + ogg_crc(blank).to_bytes(4, "little") + blank[26:])
    return b"".join(out)


def encode_clip(samples: np.ndarray, rate: int = RATE) -> bytes:
    """Mono ``samples`` (full scale ±1) as an Ogg Vorbis file's bytes."""
    import soundfile  # only this module reads or writes sound files

    pcm = np.clip(np.asarray(samples, dtype=np.float32), -1.0, 1.0)
    buffer = io.BytesIO()
    soundfile.write(buffer, pcm, rate, format="OGG", subtype="VORBIS",
                    compression_level=COMPRESSION)
    serial = int.from_bytes(hashlib.sha256(pcm.tobytes()).digest()[:4], "little")
    return with_serial(buffer.getvalue(), serial)


def decode_clip(data: bytes) -> tuple[np.ndarray, int]:
    """The samples and rate of an encoded clip (for the checks and the level figures)."""
    import soundfile

    samples, rate = soundfile.read(io.BytesIO(data), dtype="float64")
    return samples, rate
