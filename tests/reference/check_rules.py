#!/usr/bin/env python3
"""Which plausibility rules each structure breaks, decided independently of
isomerank with RDKit (PyPI rdkit) and a brute-force path search.

Usage: check_rules.py < smiles-one-per-line

Prints one JSON object: {"lines": N, "flagged": {rule: [line index, ...]}}
with 0-based indices of the input lines each rule flags. The rules, as the
README states them:

- small-ring-triple: a triple bond in a ring of fewer than 8 atoms
  (RDKit's smallest ring through the bond, RingInfo.MinBondRingSize);
- small-ring-cumulated: an atom with two double bonds, one of them in a ring
  of fewer than 8 atoms;
- bredt: a double bond at an atom x that is a bridgehead of a bridged
  bicyclic system with S < 7 bridge atoms (Fawcett, Chem. Rev. 1950, 47,
  219): some atom z not bonded to x is joined to x by three internally
  disjoint paths whose inner atoms number S in all. Searched here by brute
  force: every simple path of at most 5 bonds from x to z (a bridge of a
  system with S < 7 has at most 4 atoms), every triple of them;
- enol: OH on a carbon that is not aromatic (RDKit's aromaticity of the
  parsed SMILES: a phenol is not an enol) and has a triple bond to carbon,
  or a double bond to a carbon b where neither it nor b has another
  neighbour that is a non-aromatic carbon with a double bond to O, S or N
  or a triple bond to N (bonds to the OH oxygen, the carbon or b aside):
  an enol conjugated with such an acceptor is kept;
- peroxide: an O-O bond that is not single, or whose O has a second
  neighbour other than C, or that is in a 3-ring (RDKit's smallest ring
  through the bond: a dioxirane), or that is on no ring and has neither a carbon
  with a double bond to O on one side (peroxy acid, perester, diacyl
  peroxide) nor an OH on one side with a carbon of single bonds only on the
  other (hydroperoxide on an sp3 carbon);
- hydrate: a carbon with four single bonds carrying two OH, or an OH and a
  halogen, or an OH and two more O neighbours (a hemi-ortho-ester, ring or
  not), or an OH and another O, N or S neighbour over a bond RDKit puts in
  no ring;
- iminol: OH or SH on a non-aromatic carbon with a double bond to N, or SH
  on a non-aromatic carbon with a double or triple bond to carbon;
- hypohalite: a bond between O and F, Cl, Br or I;
- thione: SH on an aromatic carbon that has an aromatic N neighbour with
  two heavy neighbours and no H (pyridine-type N);
- nh-imine: a C=N double bond whose N carries one H and no other heavy
  atom, the carbon having no N, O or S neighbour besides;
- sulfur-ylide: an S with a double or triple bond to carbon and a valence
  (bond orders plus H) above 2.
- sulfur-multiple: a double or triple bond between two S, or a triple bond
  at an S.
- small-ring-cage: an atom in three or more small rings, a small ring being
  a chordless cycle of 3 or 4 atoms (3 atoms pairwise bonded; 4 atoms each
  bonded to exactly two of the others), found here by trying every 3- and
  4-subset of the atoms near each atom;
- fused-small-rings: two such small rings sharing a bond.
- antiaromatic-three-ring: a 3-membered ring (RDKit's ring perception) with a
  double bond between two of its atoms whose third atom is an uncharged O,
  N with single bonds only, or S with single bonds only (the N+ of a
  charge-separated N-oxide has no lone pair and is not flagged).
- large-conjugated-ring: a relevant cycle of 8 or more atoms in which every
  atom has a double or triple bond (any, in the ring or not; the N+ of a
  charged N-oxide holds its O by a single bond). A relevant cycle is one
  that is not the sum (symmetric difference of bond sets) of shorter cycles
  (Plotkin 1971; Vismara 1997); found here by brute force: every chordless
  cycle is listed (a cycle with a chord is the sum of two shorter ones, and
  every cycle is a sum of chordless cycles no longer than itself), and, in
  order of length, each is tested against the span of all strictly shorter
  ones by Gaussian elimination over GF(2). isomerank instead reduces by a
  basis built from Horton's candidate cycles, and lists only the cycles in
  which every atom has a multiple bond.
- cumulene: two bonded carbons that each have two double bonds (X=C=C=Y,
  three or more cumulated double bonds in a row).

With --count FILE.toml, the rules are applied instead to every `smiles =`
of that file (the NMRShiftDB2 dev structures) and the number of structures
each rule flags is printed, with up to 5 examples.

The input is read as Kekule structures (aromatic SMILES are kekulized by
RDKit's parser), so double bonds are those of one Kekule form, as the
isomer generator emits them.
"""

import json
import sys
from itertools import combinations

from rdkit import Chem, RDLogger

SMALL = 8
MAX_S = 7


def kekule(smiles):
    """The molecule in a Kekule form, and the indices of its aromatic atoms."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        sys.exit(f"check_rules: RDKit cannot read {smiles!r}")
    aromatic = {a.GetIdx() for a in mol.GetAtoms() if a.GetIsAromatic()}
    Chem.Kekulize(mol, clearAromaticFlags=True)
    return mol, aromatic


def min_bond_ring(mol, bond):
    size = mol.GetRingInfo().MinBondRingSize(bond.GetIdx())
    return size if size > 0 else None


def small_ring_triple(mol, aromatic):
    return any(
        b.GetBondType() == Chem.BondType.TRIPLE
        and (min_bond_ring(mol, b) or SMALL) < SMALL
        for b in mol.GetBonds()
    )


def small_ring_cumulated(mol, aromatic):
    for atom in mol.GetAtoms():
        doubles = [b for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE]
        if len(doubles) >= 2 and any((min_bond_ring(mol, b) or SMALL) < SMALL for b in doubles):
            return True
    return False


def enol_acceptor(atom, own, aromatic):
    """A non-aromatic carbon with a double bond to O, S or N or a triple
    bond to N, to an atom outside `own`."""
    if atom.GetSymbol() != "C" or atom.GetIdx() in aromatic:
        return False
    for b in atom.GetBonds():
        y = b.GetOtherAtom(atom)
        if y.GetIdx() in own:
            continue
        if b.GetBondType() == Chem.BondType.DOUBLE and y.GetSymbol() in ("O", "S", "N"):
            return True
        if b.GetBondType() == Chem.BondType.TRIPLE and y.GetSymbol() == "N":
            return True
    return False


def enol(mol, aromatic):
    for o in mol.GetAtoms():
        if o.GetSymbol() != "O" or o.GetTotalNumHs() != 1:
            continue
        for c in o.GetNeighbors():
            if c.GetSymbol() != "C" or c.GetIdx() in aromatic:
                continue
            for b in c.GetBonds():
                y = b.GetOtherAtom(c)
                if y.GetIdx() == o.GetIdx() or y.GetSymbol() != "C":
                    continue
                if b.GetBondType() == Chem.BondType.TRIPLE:
                    return True
                if b.GetBondType() != Chem.BondType.DOUBLE:
                    continue
                own = {o.GetIdx(), c.GetIdx(), y.GetIdx()}
                conjugated = any(
                    enol_acceptor(n, own, aromatic)
                    for end in (c, y)
                    for n in end.GetNeighbors()
                    if n.GetIdx() not in own
                )
                if not conjugated:
                    return True
    return False


def peroxide(mol, aromatic):
    def double_to_o(c):
        return any(
            b.GetBondType() == Chem.BondType.DOUBLE and b.GetOtherAtom(c).GetSymbol() == "O"
            for b in c.GetBonds()
        )

    def single_only(c):
        return all(b.GetBondType() == Chem.BondType.SINGLE for b in c.GetBonds())

    for b in mol.GetBonds():
        x, y = b.GetBeginAtom(), b.GetEndAtom()
        if x.GetSymbol() != "O" or y.GetSymbol() != "O":
            continue
        if b.GetBondType() != Chem.BondType.SINGLE:
            return True
        ends = []
        for p, q in ((x, y), (y, x)):
            others = [n for n in p.GetNeighbors() if n.GetIdx() != q.GetIdx()]
            if any(n.GetSymbol() != "C" for n in others):
                return True
            ends.append(others[0] if others else None)
        if b.IsInRing():
            if mol.GetRingInfo().MinBondRingSize(b.GetIdx()) == 3:
                return True
            continue
        if any(e is not None and double_to_o(e) for e in ends):
            continue
        carbons = [e for e in ends if e is not None]
        if len(carbons) == 1 and single_only(carbons[0]):
            continue
        return True
    return False


def paths(adj, x, z, max_bonds):
    """Every simple path x..z of at most max_bonds bonds, as inner-atom sets."""
    out = []

    def walk(v, seen, inner):
        if len(inner) + 1 > max_bonds:
            return
        for u in adj[v]:
            if u == z:
                if inner:
                    out.append(frozenset(inner))
            elif u not in seen:
                seen.add(u)
                inner.append(u)
                walk(u, seen, inner)
                inner.pop()
                seen.remove(u)

    walk(x, {x}, [])
    return out


def bredt(mol, aromatic):
    adj = {a.GetIdx(): [n.GetIdx() for n in a.GetNeighbors()] for a in mol.GetAtoms()}
    for atom in mol.GetAtoms():
        x = atom.GetIdx()
        if not any(b.GetBondType() == Chem.BondType.DOUBLE for b in atom.GetBonds()):
            continue
        if len(adj[x]) < 3:
            continue
        for z in adj:
            if z == x or z in adj[x]:
                continue
            found = paths(adj, x, z, MAX_S - 2)
            for p, q, r in combinations(found, 3):
                if (
                    len(p) + len(q) + len(r) < MAX_S
                    and not (p & q)
                    and not (p & r)
                    and not (q & r)
                ):
                    return True
    return False


HALOGENS = ("F", "Cl", "Br", "I")


def hydrate(mol, aromatic):
    for c in mol.GetAtoms():
        if c.GetSymbol() != "C":
            continue
        if any(b.GetBondType() != Chem.BondType.SINGLE for b in c.GetBonds()):
            continue
        oh = halogen = exocyclic = ether = 0
        for b in c.GetBonds():
            y = b.GetOtherAtom(c)
            if y.GetSymbol() == "O" and y.GetTotalNumHs() == 1:
                oh += 1
            elif y.GetSymbol() in HALOGENS:
                halogen += 1
            elif y.GetSymbol() in ("O", "N", "S"):
                exocyclic += not b.IsInRing()
                ether += y.GetSymbol() == "O"
        if (
            oh >= 2
            or (oh and halogen)
            or (oh and ether >= 2)
            or (oh and exocyclic)
        ):
            return True
    return False


def iminol(mol, aromatic):
    for x in mol.GetAtoms():
        if x.GetSymbol() not in ("O", "S") or x.GetTotalNumHs() != 1:
            continue
        for c in x.GetNeighbors():
            if c.GetSymbol() != "C" or c.GetIdx() in aromatic:
                continue
            for b in c.GetBonds():
                y = b.GetOtherAtom(c)
                if y.GetIdx() == x.GetIdx():
                    continue
                kind = b.GetBondType()
                if kind == Chem.BondType.DOUBLE and y.GetSymbol() == "N":
                    return True
                if (
                    x.GetSymbol() == "S"
                    and y.GetSymbol() == "C"
                    and kind in (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
                ):
                    return True
    return False


def hypohalite(mol, aromatic):
    for b in mol.GetBonds():
        ends = {b.GetBeginAtom().GetSymbol(), b.GetEndAtom().GetSymbol()}
        if "O" in ends and ends & set(HALOGENS):
            return True
    return False


def thione(mol, aromatic):
    for s in mol.GetAtoms():
        if s.GetSymbol() != "S" or s.GetTotalNumHs() != 1:
            continue
        for c in s.GetNeighbors():
            if c.GetSymbol() != "C" or c.GetIdx() not in aromatic:
                continue
            for n in c.GetNeighbors():
                if (
                    n.GetSymbol() == "N"
                    and n.GetIdx() in aromatic
                    and n.GetTotalNumHs() == 0
                    and n.GetDegree() == 2
                ):
                    return True
    return False


def nh_imine(mol, aromatic):
    for b in mol.GetBonds():
        if b.GetBondType() != Chem.BondType.DOUBLE:
            continue
        for n, c in ((b.GetBeginAtom(), b.GetEndAtom()), (b.GetEndAtom(), b.GetBeginAtom())):
            if (
                n.GetSymbol() == "N"
                and n.GetTotalNumHs() == 1
                and n.GetDegree() == 1
                and c.GetSymbol() == "C"
                and not any(
                    y.GetSymbol() in ("N", "O", "S")
                    for y in c.GetNeighbors()
                    if y.GetIdx() != n.GetIdx()
                )
            ):
                return True
    return False


def sulfur_ylide(mol, aromatic):
    for s in mol.GetAtoms():
        if s.GetSymbol() != "S":
            continue
        valence = sum(b.GetBondTypeAsDouble() for b in s.GetBonds()) + s.GetTotalNumHs()
        if valence > 2 and any(
            b.GetBondType() in (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
            and b.GetOtherAtom(s).GetSymbol() == "C"
            for b in s.GetBonds()
        ):
            return True
    return False


def sulfur_multiple(mol, aromatic):
    for b in mol.GetBonds():
        ends = (b.GetBeginAtom().GetSymbol(), b.GetEndAtom().GetSymbol())
        if b.GetBondType() == Chem.BondType.TRIPLE and "S" in ends:
            return True
        if b.GetBondType() == Chem.BondType.DOUBLE and ends == ("S", "S"):
            return True
    return False


def small_rings(mol):
    """Chordless cycles of 3 or 4 atoms, as frozensets of atom indices."""
    adj = {a.GetIdx(): {n.GetIdx() for n in a.GetNeighbors()} for a in mol.GetAtoms()}
    rings = set()
    for x in adj:
        near = {x} | adj[x]
        for y in adj[x]:
            near |= adj[y]
        for size in (3, 4):
            for rest in combinations(sorted(near - {x}), size - 1):
                ring = (x,) + rest
                if all(len(adj[a] & set(ring)) == 2 for a in ring):
                    rings.add(frozenset(ring))
    return adj, [r for r in rings if len(r) == 3 or all(
        len(adj[a] & r) == 2 for a in r)]


def small_ring_cage(mol, aromatic):
    _, rings = small_rings(mol)
    return any(sum(a in r for r in rings) >= 3 for a in range(mol.GetNumAtoms()))


def fused_small_rings(mol, aromatic):
    adj, rings = small_rings(mol)
    for r, q in combinations(rings, 2):
        shared = r & q
        if any(adj[a] & shared for a in shared):
            return True
    return False


def antiaromatic_three_ring(mol, aromatic):
    for ring in mol.GetRingInfo().AtomRings():
        if len(ring) != 3:
            continue
        for x in ring:
            y, z = [a for a in ring if a != x]
            if mol.GetBondBetweenAtoms(y, z).GetBondType() != Chem.BondType.DOUBLE:
                continue
            third = mol.GetAtomWithIdx(x)
            single = all(b.GetBondType() == Chem.BondType.SINGLE for b in third.GetBonds())
            lone_pair = third.GetFormalCharge() == 0
            if lone_pair and (third.GetSymbol() == "O" or (third.GetSymbol() in ("N", "S") and single)):
                return True
    return False


LARGE_RING = 8


def chordless_cycles(adj):
    """Every chordless cycle of the graph (adjacency sets), as atom lists
    in ring order: induced paths from their lowest atom, closed when the new
    atom is bonded to the start."""
    out = []

    def extend(path, on_path):
        start, last = path[0], path[-1]
        for u in adj[last]:
            if u <= start or u in on_path:
                continue
            if any(u in adj[v] for v in path[1:-1]):
                continue
            if len(path) >= 2 and start in adj[u]:
                if path[1] < u:
                    out.append(path + [u])
                continue
            on_path.add(u)
            extend(path + [u], on_path)
            on_path.remove(u)

    for s in adj:
        extend([s], {s})
    return out


def large_conjugated_ring(mol, aromatic):
    multiple = (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
    unsaturated = {
        a.GetIdx() for a in mol.GetAtoms()
        if any(b.GetBondType() in multiple for b in a.GetBonds())
    }
    if len(unsaturated) < LARGE_RING:
        return False
    adj = {a.GetIdx(): {n.GetIdx() for n in a.GetNeighbors()} for a in mol.GetAtoms()}
    cycles = sorted(chordless_cycles(adj), key=len)

    def bonds(cycle):
        v = 0
        for i, a in enumerate(cycle):
            v |= 1 << mol.GetBondBetweenAtoms(a, cycle[(i + 1) % len(cycle)]).GetIdx()
        return v

    def reduce(basis, v):
        while v:
            top = v.bit_length() - 1
            if top not in basis:
                return v
            v ^= basis[top]
        return 0

    basis = {}
    i = 0
    while i < len(cycles):
        size = len(cycles[i])
        j = i
        while j < len(cycles) and len(cycles[j]) == size:
            j += 1
        vectors = [bonds(c) for c in cycles[i:j]]
        # Tested against the shorter cycles only, before this size joins.
        for c, v in zip(cycles[i:j], vectors):
            if size >= LARGE_RING and set(c) <= unsaturated and reduce(basis, v):
                return True
        for v in vectors:
            r = reduce(basis, v)
            if r:
                basis[r.bit_length() - 1] = r
        i = j
    return False


def cumulene(mol, aromatic):
    def doubles(atom):
        return sum(b.GetBondType() == Chem.BondType.DOUBLE for b in atom.GetBonds())

    return any(
        x.GetSymbol() == "C" and y.GetSymbol() == "C" and doubles(x) == 2 and doubles(y) == 2
        for b in mol.GetBonds()
        for x, y in [(b.GetBeginAtom(), b.GetEndAtom())]
    )


RULES = {
    "small-ring-triple": small_ring_triple,
    "small-ring-cumulated": small_ring_cumulated,
    "bredt": bredt,
    "enol": enol,
    "peroxide": peroxide,
    "hydrate": hydrate,
    "iminol": iminol,
    "hypohalite": hypohalite,
    "thione": thione,
    "nh-imine": nh_imine,
    "sulfur-ylide": sulfur_ylide,
    "sulfur-multiple": sulfur_multiple,
    "small-ring-cage": small_ring_cage,
    "fused-small-rings": fused_small_rings,
    "antiaromatic-three-ring": antiaromatic_three_ring,
    "large-conjugated-ring": large_conjugated_ring,
    "cumulene": cumulene,
}


def count_file(path):
    """Structures of a data file (lines `smiles = "..."`) each rule flags."""
    import re
    with open(path) as f:
        smiles = re.findall(r'^smiles = "(.*)"$', f.read(), re.M)
    counts = {name: [] for name in RULES}
    for s in smiles:
        mol, aromatic = kekule(s)
        for name, rule in RULES.items():
            if rule(mol, aromatic):
                counts[name].append(s)
    print(json.dumps({"structures": len(smiles),
                      "flagged": {k: len(v) for k, v in counts.items()},
                      "examples": {k: v[:5] for k, v in counts.items()}}, indent=1))


def main():
    RDLogger.DisableLog("rdApp.*")
    if len(sys.argv) == 3 and sys.argv[1] == "--count":
        count_file(sys.argv[2])
        return
    lines = [l.strip() for l in sys.stdin if l.strip()]
    flagged = {name: [] for name in RULES}
    for i, smiles in enumerate(lines):
        mol, aromatic = kekule(smiles)
        for name, rule in RULES.items():
            if rule(mol, aromatic):
                flagged[name].append(i)
    print(json.dumps({"lines": len(lines), "flagged": flagged}))


if __name__ == "__main__":
    main()
