"""RDKit's view of molecules for the SMILES and aromaticity tests.

Reads lines "id<TAB>input SMILES<TAB>isomerank canonical SMILES" on stdin and
writes, per line, tab-separated:
  id
  RDKit canonical SMILES of the input          (or ERROR:<message>)
  RDKit canonical SMILES of isomerank's output (or ERROR:<message>)
  aromatic flag per input atom, in input order, as a string of 0/1
  aromatic bonds of the input (bond type AROMATIC) as "i-j" pairs, i<j, comma-separated
  rings of RDKit's ring perception (symmetrised SSSR) as sorted atom lists "a.b.c", comma-separated
  random SMILES of the input, space-separated: 3 aromatic (MolToRandomSmilesVect,
  fixed seed) and 2 Kekule (doRandom with kekuleSmiles after Kekulize)
Source of truth: RDKit from PyPI (package "rdkit").
"""
import sys

from rdkit import Chem, RDLogger, rdBase

RDLogger.DisableLog("rdApp.*")
rdBase.SeedRandomNumberGenerator(20240601)


def canon(smiles):
    m = Chem.MolFromSmiles(smiles)
    if m is None:
        return None, "ERROR:unreadable"
    # Constitution only: the tool ignores stereo marks.
    return m, Chem.MolToSmiles(m, isomericSmiles=False)


def main():
    # Read all input before writing anything: the caller writes its whole
    # input before reading, so writing early could fill the pipe and block.
    lines = sys.stdin.read().split("\n")
    out = []
    for line in lines:
        line = line.rstrip("\n")
        if not line:
            continue
        ident, given, ours = line.split("\t")
        m, can_in = canon(given)
        _, can_ours = canon(ours)
        if m is None:
            out.append("\t".join([ident, can_in, can_ours, "", "", "", ""]))
            continue
        flags = "".join("1" if a.GetIsAromatic() else "0" for a in m.GetAtoms())
        bonds = []
        for b in m.GetBonds():
            if b.GetBondType() == Chem.BondType.AROMATIC:
                i, j = sorted((b.GetBeginAtomIdx(), b.GetEndAtomIdx()))
                bonds.append(f"{i}-{j}")
        rings = sorted(".".join(str(x) for x in sorted(r)) for r in m.GetRingInfo().AtomRings())
        randoms = list(Chem.MolToRandomSmilesVect(m, 3, randomSeed=7))
        k = Chem.Mol(m)
        Chem.Kekulize(k, clearAromaticFlags=True)
        for _ in range(2):
            randoms.append(Chem.MolToSmiles(k, doRandom=True, kekuleSmiles=True))
        out.append("\t".join([ident, can_in, can_ours, flags, ",".join(sorted(bonds)), ",".join(rings), " ".join(randoms)]))
    sys.stdout.write("".join(x + "\n" for x in out))


main()
