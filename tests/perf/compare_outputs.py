"""Compare what two checkouts of symcirc print for every example and valid test circuit.

    python tests/perf/compare_outputs.py record ROOT OUT.json   # before and after a change
    python tests/perf/compare_outputs.py compare OLD.json NEW.json

`record` runs `inspect` (text, json) and `derive` (text, json, --values, --steps) on
`examples/*.circuit` and `tests/valid/*.circuit` of this checkout with ROOT's `symcirc`
package first on the path (a copy of another commit: `git archive COMMIT | tar -x -C
ROOT`); `compare` reports how many outputs were compared and which differ (stdout, stderr
or exit status). A script, not a test: it takes minutes.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
from pathlib import Path

COMMANDS = (
    ("inspect",), ("inspect", "--format", "json"),
    ("derive",), ("derive", "--format", "json"), ("derive", "--values"), ("derive", "--steps"),
)
RUN = "import sys; from symcirc.cli import main; sys.exit(main(sys.argv[1:]))"


def outputs(root: Path, files: list[Path]) -> dict[tuple[str, ...], tuple[int, str, str]]:
    environment = dict(os.environ, PYTHONPATH=str(root), PYTHONHASHSEED="0")
    found = {}
    for file in files:
        for command in COMMANDS:
            argv = (command[0], str(file), *command[1:])
            done = subprocess.run([sys.executable, "-c", RUN, *argv], capture_output=True,
                                  text=True, env=environment, cwd=root)
            found[argv] = (done.returncode, done.stdout, done.stderr)
    return found


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("mode", choices=("record", "compare"))
    parser.add_argument("first", type=Path)
    parser.add_argument("second", type=Path)
    args = parser.parse_args()
    if args.mode == "record":
        here = Path(__file__).resolve().parents[2]
        files = sorted([*here.glob("examples/*.circuit"), *here.glob("tests/valid/*.circuit")])
        found = outputs(args.first.resolve(), files)
        args.second.write_text(json.dumps([[list(k), list(v)] for k, v in found.items()]))
        print(f"{len(found)} outputs recorded ({len(files)} circuits)")
        return 0
    old, new = ({tuple(k): v for k, v in json.loads(p.read_text())}
                for p in (args.first, args.second))
    differing = [argv for argv in old if old[argv] != new.get(argv)]
    for argv in differing:
        print("differs:", " ".join(argv))
    print(f"{len(old)} outputs compared, {len(differing)} differ")
    return 1 if differing else 0


if __name__ == "__main__":
    sys.exit(main())
