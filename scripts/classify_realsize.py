#!/usr/bin/env python3
"""Sort every miss and every time-limit hit of a real-size ranking run.

Usage:
    RANK_NMRSHIFTDB_TSV=run.tsv cargo run --release --example rank_nmrshiftdb -- 11-20 every=5
    ISOMERANK_PYTHON=... scripts/classify_realsize.py run.tsv [REFERENCE_DIR]

REFERENCE_DIR (default tests/reference) holds the check_rules.py and
check_constraints.py to decide with: give the folder of an older checkout to
classify a run made with that checkout's rules.

Reads the TSV the example writes (its columns are described in
examples/rank_nmrshiftdb.rs) and puts each compound whose deposited
structure is not first, or whose search stopped at the time limit, in one
class, decided outside isomerank with RDKit (PyPI rdkit) through the
reference scripts of tests/reference/:

- ``rule:NAME``: a plausibility rule removes the deposited structure
  (tests/reference/check_rules.py decides each rule);
- ``bounds:hydrogens`` / ``bounds:classes``: the search bounds the 13C list
  gave (the ``bounds`` column) do not hold for the deposited structure
  (tests/reference/check_constraints.py's H counts and carbon classes);
- ``time``: the search stopped at the limit before the deposited structure
  was reached (it passes rules and bounds, is absent, and would have
  ranked within the table: its cost scored alone is at most the first's);
- ``not built``: the search covered everything, the structure passes rules
  and bounds, would have come first, and is absent: the generator cannot
  build it;
- ``low:1H`` / ``low:13C``: generated (or at least not excluded) but
  outscored; the part named is the one where the deposited structure loses
  most against the first candidate (its cost scored alone, split in its 1H
  and 13C parts, against the first candidate's parts);
- ``first, limit hit``: the search stopped at the limit and the deposited
  structure is first anyway.

Prints one line per such compound and the count per class.
"""

import csv
import json
import math
import os
import sys
from collections import Counter

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(
    0,
    sys.argv[2] if len(sys.argv) > 2 else os.path.join(HERE, "..", "tests", "reference"),
)

from rdkit import Chem, RDLogger  # noqa: E402

import check_constraints  # noqa: E402
import check_rules  # noqa: E402


def num(text):
    try:
        return float(text)
    except ValueError:
        return math.nan


def classify(row):
    position = int(row["position"]) if row["position"] else None
    complete = row["complete"] == "true"
    if math.isnan(num(row["truth_cost"])):
        return "refused"
    if position == 1:
        return None if complete else "first, limit hit"
    smiles = row["smiles"]
    mol, aromatic = check_rules.kekule(smiles)
    broken = [name for name, rule in check_rules.RULES.items() if rule(mol, aromatic)]
    if broken:
        return "rule:" + ",".join(broken)
    spec = json.loads(row["bounds"] or "{}")
    parsed = Chem.MolFromSmiles(smiles)
    for part in ("hydrogens", "classes"):
        if part in spec and not check_constraints.fits(parsed, {part: spec[part]}, [], []):
            return "bounds:" + part
    truth = num(row["truth_cost"])
    first = num(row["first_cost"])
    # No first candidate (the limit came before the first task was
    # covered) compares as an infinitely bad one.
    if math.isnan(first):
        first = math.inf
    if position is None and truth <= first + 1e-9:
        return "time" if not complete else "not built"
    lose_1h = num(row["truth_alone_1h"]) - num(row["first_1h"])
    lose_13c = num(row["truth_alone_13c"]) - num(row["first_13c"])
    where = "low:1H" if lose_1h >= lose_13c else "low:13C"
    if not complete:
        where += " (limit hit)"
    return where


def main():
    RDLogger.DisableLog("rdApp.*")
    if len(sys.argv) not in (2, 3):
        sys.exit(__doc__)
    with open(sys.argv[1], newline="") as f:
        rows = list(csv.DictReader(f, delimiter="\t"))
    counts = Counter()
    for row in rows:
        kind = classify(row)
        if kind is None:
            continue
        counts[kind.split(" (")[0] if kind.startswith("low") else kind] += 1
        print(
            f"{row['id']:>9} {row['formula']:<12} {kind:<22} position {row['position'] or '>10':<4}"
            f" {float(row['seconds']):6.1f} s {row['considered']:>9} cand."
            f"  truth {num(row['truth_cost']):.2f} (1H {num(row['truth_alone_1h']):.2f}"
            f" 13C {num(row['truth_alone_13c']):.2f}) first {num(row['first_cost']):.2f}"
            f" (1H {num(row['first_1h']):.2f} 13C {num(row['first_13c']):.2f})"
            f"  {row['smiles']}  first {row['first']}"
        )
    print(f"{len(rows)} compounds; by class:")
    for kind, n in counts.most_common():
        print(f"  {kind:<24} {n}")


if __name__ == "__main__":
    main()
