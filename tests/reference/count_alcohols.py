#!/usr/bin/env python3
"""Count the alcohols in a list of SMILES (one per line on stdin): molecules
with an OH group on an sp3 carbon, the RDKit SMARTS [CX4][OX2H]. For the
saturated formulas CnH(2n+2)O this counts the alcohols CnH(2n+1)OH, whose
number is OEIS A000598 (alkyl groups); the rest are ethers. Prints the count.
"""

import sys

from rdkit import Chem, RDLogger


def main():
    RDLogger.DisableLog("rdApp.*")
    pattern = Chem.MolFromSmarts("[CX4][OX2H]")
    count = 0
    for number, raw in enumerate(sys.stdin, start=1):
        smiles = raw.strip()
        if not smiles:
            continue
        mol = Chem.MolFromSmiles(smiles)
        if mol is None:
            sys.exit(f"count_alcohols: line {number}: RDKit cannot read {smiles!r}")
        if mol.HasSubstructMatch(pattern):
            count += 1
    print(count)


if __name__ == "__main__":
    main()
