#!/usr/bin/env python3
"""RDKit validity check of an isomer list (FIELD-GUIDE section 3: every SMILES
parses, has the asked formula, and no two share a canonical SMILES).

Usage: check_isomers.py FORMULA < smiles-one-per-line

Each line must be a SMILES that RDKit parses and sanitizes, of one connected,
neutral, closed-shell molecule whose element counts (implicit H included)
equal FORMULA's; no two lines may give the same RDKit canonical SMILES.
Prints one JSON object: {"lines": N, "unique": U, "problems": [...]} with at
most 20 problem descriptions and "problem_count" for all of them.
"""

import json
import re
import sys
from collections import Counter

from rdkit import Chem, RDLogger


def parse_formula(text):
    counts = Counter()
    if not re.fullmatch(r"(?:[A-Z][a-z]?\d*)+", text):
        sys.exit(f"check_isomers: not a molecular formula: {text!r}")
    for symbol, digits in re.findall(r"([A-Z][a-z]?)(\d*)", text):
        counts[symbol] += int(digits) if digits else 1
    return counts


def molecule_counts(mol):
    counts = Counter()
    for atom in mol.GetAtoms():
        counts[atom.GetSymbol()] += 1
        counts["H"] += atom.GetTotalNumHs()
    return counts


def main():
    RDLogger.DisableLog("rdApp.*")
    want = parse_formula(sys.argv[1])
    problems = []
    seen = {}
    lines = 0
    for number, raw in enumerate(sys.stdin, start=1):
        smiles = raw.rstrip("\n")
        lines += 1
        mol = Chem.MolFromSmiles(smiles)
        if mol is None:
            problems.append(f"line {number}: RDKit cannot parse or sanitize {smiles!r}")
            continue
        got = molecule_counts(mol)
        if +got != +want:
            problems.append(f"line {number}: {smiles!r} has formula {dict(got)}, asked {dict(want)}")
        if len(Chem.GetMolFrags(mol)) != 1:
            problems.append(f"line {number}: {smiles!r} is not one connected molecule")
        if any(a.GetFormalCharge() != 0 for a in mol.GetAtoms()):
            problems.append(f"line {number}: {smiles!r} has a charged atom")
        if any(a.GetNumRadicalElectrons() != 0 for a in mol.GetAtoms()):
            problems.append(f"line {number}: {smiles!r} has a radical")
        canonical = Chem.MolToSmiles(mol)
        if canonical in seen:
            problems.append(f"line {number}: {smiles!r} is the same compound as line "
                            f"{seen[canonical]} (RDKit canonical {canonical!r})")
        else:
            seen[canonical] = number
    print(json.dumps({"lines": lines, "unique": len(seen),
                      "problem_count": len(problems), "problems": problems[:20]}))


if __name__ == "__main__":
    main()
