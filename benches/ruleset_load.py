"""How long a ruleset with a huge literal list or map takes to load.

Generates (seeded) a ruleset with one `[[flag]]` whose `any` lists 300,000
distinct words and one with a `[[label]]` whose `map` has 70,000 keys, then
runs `descry check` on a one-row table with each, several times, and prints
the median wall time of each next to a plain run with a tiny ruleset (the
floor: process start and reading the table). Target: under 2 s each.

usage: python3 benches/ruleset_load.py [path/to/descry] [--rounds N]
"""
import random
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path


def words(n: int, seed: int = 1) -> list[str]:
    rng = random.Random(seed)
    out: set[str] = set()
    while len(out) < n:
        out.add("".join(rng.choice("abcdefghijklmnopqrstuvwxyz") for _ in range(rng.randint(4, 12))))
    return sorted(out)


def main() -> int:
    argv = sys.argv[1:]
    rounds = 5
    if "--rounds" in argv:
        at = argv.index("--rounds")
        rounds = int(argv[at + 1])
        del argv[at : at + 2]
    descry = argv[0] if argv else "target/release/descry"
    with tempfile.TemporaryDirectory() as tmp:
        d = Path(tmp)
        table = d / "one.csv"
        table.write_text("c\nabc\nqwerty\n")
        w = words(300_000)
        rulesets = {
            "floor (one literal)": 'column = "c"\n[[flag]]\nname = "w"\nany = ["abc"]\n',
            "any: 300,000 words": 'column = "c"\n[[flag]]\nname = "w"\nany = ['
            + ",".join(f'"{x}"' for x in w)
            + "]\n",
            "map: 70,000 keys": 'column = "c"\n[[label]]\nname = "m"\n[label.map]\n'
            + "".join(f'"{x}" = "L{i}"\n' for i, x in enumerate(w[:70_000])),
        }
        print(f"{'ruleset':<22} {'bytes':>11} {'median s':>9}  rounds")
        for name, text in rulesets.items():
            path = d / "r.toml"
            path.write_text(text)
            times = []
            for _ in range(rounds):
                start = time.perf_counter()
                run = subprocess.run([descry, "check", str(table), "-r", str(path)], capture_output=True)
                times.append(time.perf_counter() - start)
                if run.returncode != 0:
                    print(run.stderr.decode(), file=sys.stderr)
                    return 1
            print(f"{name:<22} {len(text):>11,} {statistics.median(times):>9.3f}  {', '.join(f'{t:.2f}' for t in times)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
