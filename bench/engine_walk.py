"""Time one walk of the fixture pack (engine only). Run: python bench/engine_walk.py

Not a test: timings depend on the machine. Prints microseconds per walk for a few fact sets.
"""

from __future__ import annotations

import time
from pathlib import Path

from notegen.engine import NumberFact, load_pack, walk

PACK = Path(__file__).resolve().parent.parent / "tests" / "fixtures" / "packs" / "plants"

CASES = {
    "nothing known": {},
    "dry, drooping": {"soil_moisture": NumberFact(10, "%"), "drooping": True, "leaf_colour": "green"},
    "wet, all known": {
        "soil_moisture": NumberFact(70, "%"),
        "pot_drains": False,
        "light_hours": NumberFact(8, "h/day"),
        "pests_seen": False,
        "room": "hall",
        "leaf_colour": "yellow",
    },
}


def main(rounds: int = 5000) -> None:
    started = time.perf_counter()
    pack = load_pack([PACK])
    print(f"load and compile: {(time.perf_counter() - started) * 1000:.1f} ms")
    for name, facts in CASES.items():
        walk(pack, facts)  # type: ignore[arg-type]
        started = time.perf_counter()
        for _ in range(rounds):
            walk(pack, facts)  # type: ignore[arg-type]
        per_walk = (time.perf_counter() - started) / rounds * 1e6
        print(f"{name:>16}: {per_walk:7.1f} µs per walk (with next tests)")


if __name__ == "__main__":
    main()
