"""Invented, deterministic cases for the benchmark: plain case data, as a case file or a JSON Lines row holds it.

Every case is made up from a seeded random generator; no value comes from a person. The mix is
chosen so that every stage runs: about half the cases carry a metabolic alkalosis (the rule walk
runs), the rest a metabolic acidosis with a high or normal gap, a respiratory disorder, or nothing;
some lack the gas or the urine, some list medications and findings, a few hold serial gases.

    python bench/cases.py 1000 > cases.jsonl     # the same 1,000 lines on every machine
"""

from __future__ import annotations

import json
import random
import sys
from collections.abc import Iterator
from typing import Any

MEDICATIONS = (
    "furosemide",
    "hydrochlorothiazide",
    "chlorthalidone",
    "spironolactone",
    "fludrocortisone",
    "prednisone",
    "sodium bicarbonate",
    "lisinopril",
    "amlodipine",
    "metoprolol",
    "senna",
    "an unlisted tablet",
)
FINDINGS = ("vomiting", "gastric_drainage", "diarrhea", "edema", "hypertension", "heart_failure", "cirrhosis")
PATTERNS = (
    "metabolic_alkalosis",
    "metabolic_alkalosis",
    "metabolic_alkalosis",
    "high_gap_acidosis",
    "normal_gap_acidosis",
    "respiratory_acidosis",
    "respiratory_alkalosis",
    "normal",
)


def _round(value: float, digits: int) -> float:
    return round(value, digits)


def _gas(rng: random.Random, pattern: str) -> dict[str, Any]:
    if pattern == "metabolic_alkalosis":
        hco3 = rng.uniform(30, 44)
        pco2 = 40 + 0.7 * (hco3 - 24) + rng.uniform(-3, 3)
    elif pattern in ("high_gap_acidosis", "normal_gap_acidosis"):
        hco3 = rng.uniform(8, 19)
        pco2 = 1.5 * hco3 + 8 + rng.uniform(-3, 3)
    elif pattern == "respiratory_acidosis":
        pco2 = rng.uniform(50, 75)
        hco3 = 24 + 0.35 * (pco2 - 40) + rng.uniform(-1, 1)
    elif pattern == "respiratory_alkalosis":
        pco2 = rng.uniform(24, 33)
        hco3 = 24 - 0.4 * (40 - pco2) + rng.uniform(-1, 1)
    else:
        pco2, hco3 = rng.uniform(37, 43), rng.uniform(23, 26)
    # Henderson-Hasselbalch with pK 6.1 and solubility 0.03, so the gas is internally consistent.
    import math

    ph = 6.1 + math.log10(hco3 / (0.03 * pco2))
    return {
        "sample": rng.choice(("arterial", "arterial", "arterial", "venous")),
        "ph": _round(ph, 2),
        "pco2": _round(pco2, 0),
        "hco3": _round(hco3, 0),
    }


def _chem(rng: random.Random, pattern: str, hco3: float) -> dict[str, Any]:
    na = rng.randint(128, 146)
    gap = rng.uniform(20, 30) if pattern == "high_gap_acidosis" else rng.uniform(7, 13)
    chem: dict[str, Any] = {
        "na": na,
        "k": _round(rng.uniform(2.4, 5.4), 1),
        "cl": int(round(na - hco3 - gap)),
        "tco2": int(round(hco3 + 1)),
        "bun": rng.randint(8, 60),
        "creatinine": _round(rng.uniform(0.6, 3.5), 1),
        "albumin": _round(rng.uniform(2.2, 4.6), 1),
    }
    if rng.random() < 0.5:
        chem["glucose"] = rng.randint(70, 300)
    if rng.random() < 0.4:
        chem["mg"] = _round(rng.uniform(1.2, 2.6), 1)
    if pattern == "high_gap_acidosis" and rng.random() < 0.6:
        chem["lactate"] = _round(rng.uniform(2.5, 9), 1)
    return chem


def _urine(rng: random.Random) -> dict[str, Any]:
    urine: dict[str, Any] = {"na": rng.randint(5, 120), "k": rng.randint(10, 90), "creatinine": rng.randint(30, 200)}
    urine["cl"] = "<10" if rng.random() < 0.15 else rng.randint(5, 140)
    if rng.random() < 0.3:
        urine["calcium"] = _round(rng.uniform(2, 30), 1)
    return urine


def make_case(index: int, seed: int = 2026) -> dict[str, Any]:
    """Case number `index` of the series `seed`; the same arguments always give the same case."""
    rng = random.Random(seed * 1_000_003 + index)
    pattern = rng.choice(PATTERNS)
    case: dict[str, Any] = {"case": f"invented case {index}", "units": "conventional"}
    case["patient"] = {
        "age": rng.randint(19, 92),
        "sex": rng.choice(("female", "male")),
        "weight_kg": rng.randint(45, 120),
    }
    gas = _gas(rng, pattern)
    if rng.random() < 0.1 and pattern != "metabolic_alkalosis":
        gas = {}  # a chemistry panel without a gas
    if gas and rng.random() < 0.05:
        # serial gases: the latest complete one is read, the earlier ones kept
        earlier = dict(gas, ph=_round(gas["ph"] - 0.02, 2), taken_at="2026-03-14T02:00")
        gas = [earlier, dict(gas, taken_at="2026-03-14T06:00")]
    if gas:
        case["gas"] = gas
    hco3 = (gas[-1] if isinstance(gas, list) else gas).get("hco3", rng.uniform(18, 30))
    case["chem"] = _chem(rng, pattern, float(hco3))
    if isinstance(gas, list):
        case["chem"]["taken_at"] = "2026-03-14T06:10"
    if rng.random() < 0.75:
        case["urine"] = _urine(rng)
        if isinstance(gas, list):
            case["urine"]["taken_at"] = "2026-03-14T06:20"
    context: dict[str, Any] = {"volume": rng.choice(("low", "normal", "high", "unknown"))}
    if rng.random() < 0.7:
        context["bp"] = f"{rng.randint(88, 190)}/{rng.randint(50, 110)}"
        systolic, diastolic = (int(x) for x in context["bp"].split("/"))
        if diastolic >= systolic:
            context["bp"] = f"{systolic}/{systolic - 30}"
    meds: list[Any] = []
    for _ in range(rng.choice((0, 0, 1, 2, 3))):
        name = rng.choice(MEDICATIONS)
        meds.append({"name": name, "last_dose_hours": rng.randint(1, 48)} if rng.random() < 0.5 else name)
    context["meds"] = meds
    context["findings"] = sorted(rng.sample(FINDINGS, rng.choice((0, 0, 1, 1, 2))))
    case["context"] = context
    return case


def generate(count: int, seed: int = 2026) -> Iterator[dict[str, Any]]:
    for index in range(count):
        yield make_case(index, seed)


def main() -> None:
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 2000
    out = sys.stdout
    for case in generate(count):
        out.write(json.dumps(case, separators=(",", ":")) + "\n")


if __name__ == "__main__":
    main()
