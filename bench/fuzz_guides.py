"""Mutated copies of the demo guides through ``kitleaf check``: no traceback, no hang, no raw text.

Each case takes one demo guide and applies one to three seeded mutations (a line deleted,
duplicated or swapped, bytes flipped, a stretch cut, a value moved from one part line to
another, an extreme value put on a part, a hostile word put in place of one), writes it to a
file and runs ``kitleaf check`` on it in this process. A case passes when the command returns
0 or 1 and every line it printed to stderr is ``path:line: error|warning: ...`` on one line
with no control character. A case fails on a traceback (any exception out of ``main``), a
hang (over ``--limit`` seconds of this process's CPU time, so a machine shared with others
does not make one), or an unlocated or raw line (a numpy warning, say). Failing cases are
saved for replay.

    python bench/fuzz_guides.py                   # 10,000 cases, seed 1
    python bench/fuzz_guides.py --cases 500 --seed 7 --save /tmp/fuzz-failures
"""

from __future__ import annotations

import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import contextlib  # noqa: E402
import io  # noqa: E402
import random  # noqa: E402
import re  # noqa: E402
import signal  # noqa: E402
import sys  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
import traceback  # noqa: E402
import warnings  # noqa: E402
from collections import Counter  # noqa: E402
from dataclasses import dataclass, field  # noqa: E402
from pathlib import Path  # noqa: E402

from kitleaf.cli import main  # noqa: E402

DEMO = Path(__file__).resolve().parent.parent / "guides"
# Words a careless maker or an attacker puts where a value, a name or a key stood.
HOSTILE = (
    "0", "-1", "-4k7", "nan", "inf", "-inf", "1e308", "1e-308", "1e99999", "0.0", "1/0W",
    "1/3W", "4k7k", "10G", "1m", "999999999999", "", " ", "\t", "\x1b[31m", "\x00", "\u202e",
    "\ufeff", "é", "Лампа", "```", "```stage x", "~~~", ">", "- ", "#", '"', "'", "@", "@ a b",
    "=", "A", "VR1", "R1", "Q1", "U1A", "kind: custom", "x" * 300, "{=kit.gain}", "{=", "<script>",
    "1%", "200%", "25V", "0V", "taper=log", "package=TO-92", "lin log", "A100k", "C1 1u", "%",
)
# Values inside the readable range but far from a kit's: they reach the solver.
EXTREME = ("R001", "1G", "999G", "1p", "0.1p", "999m", "100m", "1n", "999", "1M", "10")
_VALUE = re.compile(r"^(\s*[a-z][a-z0-9-]*:\s*[A-Z]+[0-9]+[A-Z]?\s+)(\S+)(.*)$")


@dataclass
class Tally:
    """What a run found, and the cases that failed (the mutated text and what happened)."""

    cases: int = 0
    outcomes: Counter = field(default_factory=Counter)
    failures: list[tuple[str, bytes, str]] = field(default_factory=list)
    slowest: float = 0.0
    seconds: float = 0.0

    @property
    def tracebacks(self) -> int:
        return self.outcomes["traceback"]

    @property
    def hangs(self) -> int:
        return self.outcomes["hang"]

    @property
    def raw_lines(self) -> int:
        return self.outcomes["raw line"]


class Hang(Exception):
    """Raised by the alarm when one case runs past its time limit."""


def mutate(data: bytes, rng: random.Random) -> bytes:
    """One to three mutations of ``data``, chosen by ``rng``."""
    for _ in range(rng.randint(1, 3)):
        data = rng.choice(MUTATIONS)(data, rng)
    return data


def _lines(data: bytes) -> list[bytes]:
    return data.split(b"\n")


def delete_line(data: bytes, rng: random.Random) -> bytes:
    lines = _lines(data)
    del lines[rng.randrange(len(lines))]
    return b"\n".join(lines)


def duplicate_line(data: bytes, rng: random.Random) -> bytes:
    lines = _lines(data)
    i = rng.randrange(len(lines))
    lines.insert(rng.randrange(len(lines) + 1), lines[i])
    return b"\n".join(lines)


def swap_lines(data: bytes, rng: random.Random) -> bytes:
    lines = _lines(data)
    i, j = rng.randrange(len(lines)), rng.randrange(len(lines))
    lines[i], lines[j] = lines[j], lines[i]
    return b"\n".join(lines)


def flip_bytes(data: bytes, rng: random.Random) -> bytes:
    out = bytearray(data)
    for _ in range(rng.randint(1, 4)):
        out[rng.randrange(len(out))] = rng.randrange(256)
    return bytes(out)


def cut_stretch(data: bytes, rng: random.Random) -> bytes:
    start = rng.randrange(len(data))
    return data[:start] + data[start + rng.randint(1, 200):]


def swap_values(data: bytes, rng: random.Random) -> bytes:
    """The value of one part line put on another (a resistor's value on a capacitor...)."""
    lines = data.decode("utf-8", "replace").split("\n")
    parts = [i for i, line in enumerate(lines) if _VALUE.match(line)]
    if len(parts) < 2:
        return data
    i, j = rng.sample(parts, 2)
    value = _VALUE.match(lines[j])[2]
    head, _, tail = _VALUE.match(lines[i]).groups()
    lines[i] = f"{head}{value}{tail}"
    return "\n".join(lines).encode("utf-8")


def extreme_value(data: bytes, rng: random.Random) -> bytes:
    """One part line's value replaced by an extreme one (a pot keeps its taper letter)."""
    lines = data.decode("utf-8", "replace").split("\n")
    parts = [i for i, line in enumerate(lines) if _VALUE.match(line)]
    if not parts:
        return data
    i = rng.choice(parts)
    head, value, tail = _VALUE.match(lines[i]).groups()
    taper = value[0] if value[:1] in "ABC" and len(value) > 1 else ""
    lines[i] = f"{head}{taper}{rng.choice(EXTREME)}{tail}"
    return "\n".join(lines).encode("utf-8")


def hostile_word(data: bytes, rng: random.Random) -> bytes:
    """One word of a random line replaced by a hostile one."""
    lines = data.decode("utf-8", "replace").split("\n")
    i = rng.randrange(len(lines))
    words = lines[i].split(" ")
    words[rng.randrange(len(words))] = rng.choice(HOSTILE)
    lines[i] = " ".join(words)
    return "\n".join(lines).encode("utf-8")


MUTATIONS = (delete_line, duplicate_line, swap_lines, flip_bytes, cut_stretch, swap_values,
             extreme_value, extreme_value, hostile_word, hostile_word)
_LOCATED = re.compile(r"^.+:\d+: (error|warning): \S")


def run_case(path: Path, data: bytes, limit: float) -> tuple[str, str]:
    """``kitleaf check`` on ``data`` written at ``path``: the outcome and what it printed."""
    path.write_bytes(data)
    err = io.StringIO()
    signal.setitimer(signal.ITIMER_PROF, limit)
    try:
        with warnings.catch_warnings(record=True) as caught, contextlib.redirect_stderr(err), \
                contextlib.redirect_stdout(io.StringIO()):
            warnings.simplefilter("always")
            code = main(["check", str(path)])
    except Hang:
        return "hang", err.getvalue()
    except BaseException:  # noqa: BLE001 - any escape from the command is the finding
        return "traceback", traceback.format_exc()
    finally:
        try:
            signal.setitimer(signal.ITIMER_PROF, 0)
        except Hang:  # the timer ran out as the case finished: the case ended, so no hang
            pass
    return _judged(code, err.getvalue(), caught)


def _judged(code: int, printed: str, caught: list) -> tuple[str, str]:
    if caught:
        return "raw line", "\n".join(str(w.message) for w in caught)
    lines = printed.splitlines()
    if code not in (0, 1) or any(not _LOCATED.match(line) for line in lines):
        return "raw line", printed
    if any(not line.isprintable() for line in lines):
        return "raw line", printed
    return ("error" if code else "ok"), printed


def fuzz(cases: int, seed: int, limit: float = 10.0, progress=None) -> Tally:
    """Run ``cases`` seeded mutants of the demo guides through ``kitleaf check``."""
    rng = random.Random(seed)
    sources = [p.read_bytes() for p in sorted(DEMO.glob("*.md"))]
    tally = Tally()
    previous = signal.signal(signal.SIGPROF, _alarm)
    started = time.perf_counter()
    try:
        with tempfile.TemporaryDirectory(prefix="kitleaf-fuzz-") as folder:
            for case in range(cases):
                _one(Path(folder) / f"case-{case}.md", mutate(rng.choice(sources), rng),
                     limit, tally)
                if progress and (case + 1) % progress == 0:
                    print(_figures(tally, time.perf_counter() - started), flush=True)
    finally:
        signal.signal(signal.SIGPROF, previous)
    tally.seconds = time.perf_counter() - started
    return tally


def _one(path: Path, data: bytes, limit: float, tally: Tally) -> None:
    began = time.perf_counter()
    outcome, printed = run_case(path, data, limit)
    path.unlink(missing_ok=True)
    tally.slowest = max(tally.slowest, time.perf_counter() - began)
    tally.cases += 1
    tally.outcomes[outcome] += 1
    if outcome in ("traceback", "hang", "raw line"):
        tally.failures.append((outcome, data, printed))


def _alarm(signum, frame):
    raise Hang


def _figures(tally: Tally, seconds: float) -> str:
    counts = ", ".join(f"{tally.outcomes[k]} {k}" for k in
                       ("ok", "error", "traceback", "hang", "raw line"))
    return (f"{tally.cases} cases in {seconds:.0f} s ({tally.cases / max(seconds, 1e-9):.1f}/s, "
            f"slowest {tally.slowest:.2f} s): {counts}")


def save(tally: Tally, folder: Path) -> None:
    """Each failing case as ``NNN-outcome.md`` beside ``NNN-outcome.txt`` (what it printed)."""
    folder.mkdir(parents=True, exist_ok=True)
    for i, (outcome, data, printed) in enumerate(tally.failures):
        stem = f"{i:03d}-{outcome.replace(' ', '-')}"
        (folder / f"{stem}.md").write_bytes(data)
        (folder / f"{stem}.txt").write_text(printed, encoding="utf-8")


def cli() -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--cases", type=int, default=10_000)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--limit", type=float, default=10.0,
                   help="CPU seconds before a case is a hang (10)")
    p.add_argument("--save", type=Path, help="folder for the failing cases")
    args = p.parse_args()
    tally = fuzz(args.cases, args.seed, args.limit, progress=500)
    print(_figures(tally, tally.seconds))
    if args.save and tally.failures:
        save(tally, args.save)
        print(f"{len(tally.failures)} failing case(s) saved in {args.save}")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(cli())
