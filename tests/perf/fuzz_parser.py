"""Fuzz benchmark (a script, not a test): generated and mutated circuit files through parse
and elaborate, and a cheap derive where the file reads (its first quantity, as written and
with definitions substituted, text and JSON with nominal values); counts tracebacks, i.e.
anything raised that is not the project's own SymcircError.

    python tests/perf/fuzz_parser.py [--inputs N] [--seed K] [--save DIR] [--budget SECONDS]

Inputs come from the seeds of tests/test_fuzz.py (all of which parse: the every-construct
file, the examples and the valid corpus) by random edits (deletions, insertions of
language tokens or random characters, swaps, truncations, duplications), and from token
soup and random text. Each input runs in this process (no subprocess per input); an input
that takes longer than `--budget` seconds is stopped and counted as slow, not as a
traceback. `--save DIR` writes every input that raised a traceback, with its traceback.
"""

from __future__ import annotations

import argparse
import collections
import random
import signal
import sys
import time
import traceback
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from test_fuzz import TOKENS, VALID  # noqa: E402

import symcirc  # noqa: E402
from symcirc.errors import SymcircError  # noqa: E402

DERIVE_ELEMENT_LIMIT = 40
"""Only circuits up to this many elements are derived (keeps the run about the parser)."""


class Slow(Exception):
    """The per-input time budget ran out."""


def _alarm(signum, frame):
    raise Slow


def mutate(rng: random.Random, text: str) -> str:
    """A few random edits of `text`."""
    for _ in range(rng.choice((1, 1, 1, 2, 2, 3, 4, 6))):
        if not text:
            break
        i = rng.randrange(len(text))
        j = min(len(text), i + rng.randint(0, 40))
        edit = rng.choice(("delete", "insert", "insert", "swap", "truncate", "duplicate",
                           "replace"))
        if edit == "delete":
            text = text[:i] + text[j:]
        elif edit == "insert":
            text = text[:i] + piece(rng) + text[i:]
        elif edit == "replace":
            text = text[:i] + piece(rng) + text[j:]
        elif edit == "swap":
            k = rng.randrange(len(text))
            a, b = sorted((i, k))
            if a < b:
                text = text[:a] + text[b] + text[a + 1:b] + text[a] + text[b + 1:]
        elif edit == "truncate":
            text = text[:i]
        else:
            text = text[:j] + text[i:j] + text[j:]
    return text


def piece(rng: random.Random) -> str:
    """A language token, or one to three random characters (control characters included)."""
    if rng.random() < 0.7:
        return rng.choice(TOKENS)
    return "".join(chr(rng.choice((rng.randrange(32), rng.randrange(32, 127),
                                   rng.randrange(0x80, 0x3000))))
                   for _ in range(rng.randint(1, 3)))


def generate(rng: random.Random) -> str:
    roll = rng.random()
    if roll < 0.85:
        return mutate(rng, rng.choice(VALID))
    if roll < 0.95:
        return " ".join(rng.choice(TOKENS) for _ in range(rng.randint(0, 40)))
    return "".join(chr(rng.randrange(0x2FF)) for _ in range(rng.randint(0, 300)))


def exercise(text: str) -> str:
    """'error', 'read' or 'derived': how far the input got (tracebacks propagate)."""
    try:
        circuit = symcirc.parse(text, filename="fuzz.circuit")
    except SymcircError as error:
        error.format()
        return "error"
    if len(circuit.elements) > DERIVE_ELEMENT_LIMIT:
        return "read"
    quantities = [q for d in circuit.derives for q in d.texts][:1]
    try:
        if not quantities and circuit.ports:
            quantities = [f"Z({next(iter(circuit.ports))})"]
        if not quantities:
            return "read"
        for substitute in (False, True):
            for result in circuit.derive(quantities[0], steps=False, substitute=substitute):
                result.text()
                result.to_json()
    except SymcircError as error:
        error.format()
        return "read"
    return "derived"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--inputs", type=int, default=100_000)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--budget", type=float, default=5.0)
    parser.add_argument("--save", type=Path, default=None)
    args = parser.parse_args()
    rng = random.Random(args.seed)
    signal.signal(signal.SIGALRM, _alarm)
    outcomes: collections.Counter[str] = collections.Counter()
    kinds: collections.Counter[str] = collections.Counter()
    if args.save:
        args.save.mkdir(parents=True, exist_ok=True)
    start = time.perf_counter()
    for n in range(1, args.inputs + 1):
        text = generate(rng)
        signal.setitimer(signal.ITIMER_REAL, args.budget)
        try:
            outcomes[exercise(text)] += 1
        except Slow:
            outcomes["slow"] += 1
        except Exception as error:  # noqa: BLE001 -- counting exactly these is the point
            outcomes["traceback"] += 1
            frame = traceback.extract_tb(error.__traceback__)[-1]
            kind = f"{type(error).__name__} at {Path(frame.filename).name}:{frame.lineno}"
            kinds[kind] += 1
            if args.save and kinds[kind] <= 3:
                name = f"{type(error).__name__}-{kinds[kind]}-{n}"
                (args.save / f"{name}.circuit").write_text(text, encoding="utf-8",
                                                          errors="surrogatepass")
                (args.save / f"{name}.txt").write_text(traceback.format_exc(), encoding="utf-8")
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0)
        if n % 5000 == 0:
            elapsed = time.perf_counter() - start
            print(f"{n:,} inputs in {elapsed:.0f} s ({n / elapsed:.0f}/s): {dict(outcomes)}",
                  flush=True)
    elapsed = time.perf_counter() - start
    print(f"inputs: {args.inputs:,} in {elapsed:.1f} s ({args.inputs / elapsed:.0f} inputs/s)")
    print(f"outcomes: {dict(outcomes)}")
    print(f"tracebacks: {outcomes['traceback']}")
    for kind, count in kinds.most_common():
        print(f"  {count:6d}  {kind}")
    return 1 if outcomes["traceback"] else 0


if __name__ == "__main__":
    raise SystemExit(main())
