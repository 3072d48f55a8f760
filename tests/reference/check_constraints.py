#!/usr/bin/env python3
"""Which structures fit a constraint set, decided independently of
isomerank with RDKit (PyPI rdkit).

Usage: check_constraints.py SPEC_JSON < smiles-one-per-line
       check_constraints.py --each < json-one-per-line

SPEC_JSON: {"require": [smiles], "forbid": [smiles],
            "hydrogens": {"C": [[lo, hi] for h = 0..4], "O": [...]},
            "classes": {"carbonyl": [lo, hi], ..., "single": [lo, hi],
                        "two_pi": [lo, hi]},
            "class_hydrogens": {"carbonyl": [hi for h = 0..4], ...},
            "max_rings": n, "carbon_pi_max": n}   (every key optional)

With --each every input line is {"smiles": ..., "spec": SPEC_JSON}, one
spec per structure.

Prints one JSON object: {"lines": N, "fits": [0-based line indices]}.

The senses, as the README states them:

- require / forbid: RDKit's HasSubstructMatch with the fragment read by
  Chem.MolFromSmiles as the query (atoms by element, bonds by type with
  RDKit's aromaticity on both sides, H on query atoms not compared);
- hydrogens: for each listed element and h, the number of its atoms with
  GetTotalNumHs() == h lies in [lo, hi];
- classes: each carbon in one class, from RDKit's bond types of the
  parsed (aromatic) molecule: a non-aromatic double bond to O, S or N:
  carbonyl; else a triple bond: triple; else two double bonds: cumulated;
  else a double or aromatic bond: sp2; else a neighbour other than C:
  sp3-hetero; else sp3.
- class_hydrogens: for each listed class and h, the number of its carbons
  with GetTotalNumHs() == h is at most hi.
- two_pi (in classes): the number of carbons whose extra bond order is 2,
  and carbon_pi_max: the most the carbons' extra bond orders may add up
  to; a carbon's extra order is the sum of (bond order - 1) over its bonds
  in RDKit's Kekulé form (Chem.Kekulize on a copy), the same in every
  Kekulé form of a neutral molecule.
"""

import json
import sys

from rdkit import Chem

ORDER = ["carbonyl", "triple", "cumulated", "sp2", "sp3-hetero", "sp3"]


def carbon_class(atom):
    doubles = []
    triple = False
    aromatic = False
    for b in atom.GetBonds():
        t = b.GetBondType()
        other = b.GetOtherAtom(atom)
        if t == Chem.BondType.DOUBLE:
            doubles.append(other.GetSymbol())
        elif t == Chem.BondType.TRIPLE:
            triple = True
        elif t == Chem.BondType.AROMATIC:
            aromatic = True
    if any(s in ("O", "S", "N") for s in doubles):
        return "carbonyl"
    if triple:
        return "triple"
    if len(doubles) >= 2:
        return "cumulated"
    if doubles or aromatic:
        return "sp2"
    if any(n.GetSymbol() != "C" for n in atom.GetNeighbors()):
        return "sp3-hetero"
    return "sp3"


def extra_orders(mol):
    """Per carbon, the sum of (bond order - 1) over its bonds, Kekulé form."""
    kek = Chem.Mol(mol)
    Chem.Kekulize(kek, clearAromaticFlags=True)
    out = []
    for a in kek.GetAtoms():
        if a.GetSymbol() == "C":
            out.append(sum(int(b.GetBondTypeAsDouble()) - 1 for b in a.GetBonds()))
    return out


def fits(mol, spec, require, forbid):
    for element, bounds in spec.get("hydrogens", {}).items():
        counts = [0] * 5
        for a in mol.GetAtoms():
            if a.GetSymbol() == element:
                h = a.GetTotalNumHs()
                if h > 4:
                    return False
                counts[h] += 1
        if any(not (lo <= c <= hi) for c, (lo, hi) in zip(counts, bounds)):
            return False
    if "classes" in spec:
        counts = {c: 0 for c in ORDER}
        for a in mol.GetAtoms():
            if a.GetSymbol() == "C":
                counts[carbon_class(a)] += 1
        counts["single"] = counts["sp3"] + counts["sp3-hetero"]
        counts["two_pi"] = sum(1 for x in extra_orders(mol) if x == 2)
        for c, (lo, hi) in spec["classes"].items():
            if not (lo <= counts[c] <= hi):
                return False
    if "class_hydrogens" in spec:
        by_h = {c: [0] * 5 for c in ORDER}
        for a in mol.GetAtoms():
            if a.GetSymbol() == "C":
                by_h[carbon_class(a)][min(a.GetTotalNumHs(), 4)] += 1
        for c, his in spec["class_hydrogens"].items():
            if any(n > hi for n, hi in zip(by_h[c], his)):
                return False
    if "carbon_pi_max" in spec:
        if sum(extra_orders(mol)) > spec["carbon_pi_max"]:
            return False
    if "max_rings" in spec:
        rings = mol.GetNumBonds() - mol.GetNumAtoms() + 1
        if rings > spec["max_rings"]:
            return False
    if any(not mol.HasSubstructMatch(q) for q in require):
        return False
    if any(mol.HasSubstructMatch(q) for q in forbid):
        return False
    return True


def queries(spec):
    require = [Chem.MolFromSmiles(s) for s in spec.get("require", [])]
    forbid = [Chem.MolFromSmiles(s) for s in spec.get("forbid", [])]
    if any(q is None for q in require + forbid):
        sys.exit("check_constraints: RDKit cannot read a fragment")
    return require, forbid


def main():
    each = sys.argv[1] == "--each"
    if not each:
        spec = json.loads(sys.argv[1])
        require, forbid = queries(spec)
    lines = [l.strip() for l in sys.stdin if l.strip()]
    out = []
    for i, s in enumerate(lines):
        if each:
            item = json.loads(s)
            s, spec = item["smiles"], item["spec"]
            require, forbid = queries(spec)
        mol = Chem.MolFromSmiles(s)
        if mol is None:
            sys.exit(f"check_constraints: RDKit cannot read {s!r}")
        if fits(mol, spec, require, forbid):
            out.append(i)
    print(json.dumps({"lines": len(lines), "fits": out}))


if __name__ == "__main__":
    main()
