#!/usr/bin/env python3
"""Rewrite SMILES (one per line on stdin) as RDKit canonical SMILES, one per
line in the same order, so that two isomer lists can be compared as sets
whatever canonical form each was written in. A line RDKit cannot read comes
out as "!INVALID <the line>".
"""

import sys

from rdkit import Chem, RDLogger


def main():
    RDLogger.DisableLog("rdApp.*")
    out = []
    for raw in sys.stdin:
        smiles = raw.rstrip("\n")
        mol = Chem.MolFromSmiles(smiles)
        out.append(Chem.MolToSmiles(mol) if mol is not None else f"!INVALID {smiles}")
    sys.stdout.writelines(s + "\n" for s in out)


if __name__ == "__main__":
    main()
