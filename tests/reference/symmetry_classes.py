"""Symmetry classes of heavy atoms by RDKit, for the predictor's
equivalent-H test: reads SMILES lines on stdin, writes for each line the
RDKit canonical ranks with ties kept (Chem.CanonicalRankAtoms(mol,
breakTies=False)), space-separated, in the SMILES's atom order."""
import sys

from rdkit import Chem

for line in sys.stdin:
    smi = line.strip()
    if not smi:
        continue
    mol = Chem.MolFromSmiles(smi)
    if mol is None:
        print("ERROR")
        continue
    ranks = Chem.CanonicalRankAtoms(mol, breakTies=False)
    print(" ".join(str(r) for r in ranks))
