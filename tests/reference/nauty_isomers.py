#!/usr/bin/env python3
"""Independent reference for isomer enumeration: nauty's general graph
generators plus RDKit, sharing no code with isomerank.

For a molecular formula this lists every connected, neutral constitutional
isomer (implicit hydrogens, bond orders 1-3) exactly once:

1. connected skeletons of the n heavy atoms, each vertex degree at most the
   largest valence present: `geng -c -D<maxval> n <n-1>:<emax>`;
2. every colouring of their vertices by element with the exact element counts
   and a per-element degree bound (the element's valence):
   `vcolg -T -m<colours> -c<count,...> -D<valence,...>`; the counts add up to
   n, so vcolg's "at most this many of each colour" means "exactly";
3. every assignment of bond orders 1-3 whose total is the total bond order
   B = (sum of valences - H) / 2: `multig -V -T -m3 -D<maxval> -e<B>`
   (-V makes multig respect the colours when it removes isomorphic copies);
4. keep the multigraphs in which every atom's bond-order sum is at most its
   valence (the H total is then right by construction of B), build each in
   RDKit, sanitize, write canonical SMILES (aromatic form) and deduplicate:
   the Kekule forms of one aromatic compound are different multigraphs but
   one SMILES (FIELD-GUIDE section 3: C8H10 has 4679 Kekule multigraphs and
   4678 compounds).

Kekule forms of one compound share their coloured skeleton, so they come out
of the same geng graph; the work is split over processes by geng's res/mod
option without any compound crossing two shards.

Usage:
    nauty_isomers.py FORMULA [--smiles] [--expanded-valence [--any-valence-h]]
                             [--charge-separated] [--jobs N] [--no-cache] [--stats]

Prints the number of isomers, or with --smiles the sorted canonical SMILES,
one per line. --expanded-valence also allows S 4 and 6 and P 5, read as
SMILES reads implicit H: each atom takes the lowest allowed valence not below
its bond-order sum, so S(IV) needs a bond-order sum of 3 or 4, S(VI) 5 or 6,
P(V) 4 or 5 (CH3-S(=O)-CH3 counts, CH3-SH3=O does not). --any-valence-h
widens that to any allowed valence not below the bond-order sum, the rest
filled by H as the formula's H total allows. Results are cached under
<project>/.reference-cache/ (gitignored), keyed by the formula, the mode, the
nauty and RDKit versions and this script's own hash; --no-cache bypasses it.
--stats prints the pipeline's counts and timings on stderr.

--charge-separated also allows N 5 (steps 2-3 as above), keeping an N whose
bond-order sum is 5 only as the N of a charge-separated neutral group:
no H, no triple bond, at least one double bond to O, every double bond to
C, N or O (nitro, nitrate, azine and amine N-oxides, nitrones, azoxy). Each
such N is built in RDKit as [N+] with one of its N=O bonds made a single
bond to [O-] (which one does not matter: RDKit's canonical SMILES is the
same), so the output is what RDKit reads from the charged form.
"""

import argparse
import gzip
import hashlib
import itertools
import multiprocessing
import os
import re
import shutil
import subprocess
import sys
import time
from importlib.metadata import version as dist_version

from rdkit import Chem, RDLogger

# Valences, common practice (FIELD-GUIDE section 2): the standard ones, and the
# higher ones of S and P that --expanded-valence adds.
STANDARD_VALENCES = {
    "C": (4,), "N": (3,), "O": (2,), "S": (2,), "P": (3,),
    "F": (1,), "Cl": (1,), "Br": (1,), "I": (1,),
}
EXPANDED_VALENCES = dict(STANDARD_VALENCES, S=(2, 4, 6), P=(3, 5))
# Colour order given to vcolg; any fixed order works.
ELEMENT_ORDER = ["C", "N", "O", "S", "P", "F", "Cl", "Br", "I"]

BOND_TYPES = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
PROJECT_ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def parse_formula(text):
    """Element counts of a formula such as C8H8O or BrC3H7 (any order)."""
    if not text or not re.fullmatch(r"(?:[A-Z][a-z]?\d*)+", text):
        raise ValueError(f"not a molecular formula: {text!r}")
    counts = {}
    for symbol, digits in re.findall(r"([A-Z][a-z]?)(\d*)", text):
        if symbol != "H" and symbol not in STANDARD_VALENCES:
            raise ValueError(f"element {symbol!r} not supported")
        counts[symbol] = counts.get(symbol, 0) + (int(digits) if digits else 1)
    return counts


def hill(counts):
    """Hill-order formula string (C, H, then alphabetical), used as cache key."""
    keys = sorted(counts, key=lambda s: (s != "C", s != "H", s))
    if "C" not in counts:
        keys = sorted(counts)
    return "".join(s + (str(counts[s]) if counts[s] > 1 else "") for s in keys)


def tool(name):
    """Debian installs nauty's geng as nauty-geng; upstream builds call it geng."""
    for candidate in (f"nauty-{name}", name):
        path = shutil.which(candidate)
        if path:
            return path
    sys.exit(f"nauty tool {name} not found: install Debian's package nauty (scripts/test does)")


class Plan:
    """Everything the pipeline needs for one formula, picklable for workers."""

    def __init__(self, counts, expanded, any_valence_h=False, charge_separated=False):
        self.any_valence_h = any_valence_h
        self.charge_separated = charge_separated
        table = EXPANDED_VALENCES if expanded else STANDARD_VALENCES
        if charge_separated:
            table = dict(table, N=(3, 5))
        self.hydrogens = counts.get("H", 0)
        self.elements = [e for e in ELEMENT_ORDER if counts.get(e, 0) > 0]
        self.element_counts = [counts[e] for e in self.elements]
        self.valences = [table[e] for e in self.elements]
        self.n = sum(self.element_counts)
        max_per_atom = [max(v) for v in self.valences]
        self.maxval = max(max_per_atom) if max_per_atom else 0
        # Total bond order B = (sum of valences - H) / 2 over the valence choices.
        sums = set()
        for choice in itertools.product(*[
            [sum(c) for c in itertools.combinations_with_replacement(v, k)]
            for v, k in zip(self.valences, self.element_counts)
        ]):
            total = sum(choice) - self.hydrogens
            if total >= 0 and total % 2 == 0:
                sums.add(total // 2)
        lo_edges = max(self.n - 1, 0)
        self.bond_totals = sorted(b for b in sums if b >= lo_edges)
        degree_sum = sum(m * k for m, k in zip(max_per_atom, self.element_counts))
        self.max_edges = min(max(self.bond_totals, default=-1), degree_sum // 2,
                             self.n * (self.n - 1) // 2)
        self.min_edges = lo_edges

    def empty(self):
        return self.n == 0 or not self.bond_totals or self.max_edges < self.min_edges

    def commands(self, res, mod):
        geng = [tool("geng"), "-c", "-q", f"-D{self.maxval}", str(self.n),
                f"{self.min_edges}:{self.max_edges}"]
        if mod > 1:
            geng.append(f"{res}/{mod}")
        vcolg = [tool("vcolg"), "-q", "-T", f"-m{len(self.elements)}",
                 "-c" + ",".join(map(str, self.element_counts)),
                 "-D" + ",".join(str(max(v)) for v in self.valences)]
        lo, hi = self.bond_totals[0], self.bond_totals[-1]
        multig = [tool("multig"), "-q", "-V", "-T", "-m3", f"-D{self.maxval}",
                  f"-e{lo}:{hi}" if lo != hi else f"-e{lo}"]
        return [geng, vcolg, multig]


def hydrogen_choices(plan, symbols_valences, bond_sums):
    """All per-atom H counts that give each atom an allowed valence and the
    formula's H total (a single choice with standard valences)."""
    options = []
    for allowed, b in zip(symbols_valences, bond_sums):
        hs = [v - b for v in allowed if v >= b]
        if not hs:
            return []
        if not plan.any_valence_h:
            hs = hs[:1]
        options.append(hs)
    return [h for h in itertools.product(*options) if sum(h) == plan.hydrogens]


def oxide_nitrogens(symbols, hcounts, bonds):
    """The N atoms with bond-order sum + H = 5, or None when one of them is
    not the N of a charge-separated group (no H, no triple bond, a double
    bond to O, double bonds only to C, N or O)."""
    sums = [0] * len(symbols)
    for u, v, k in bonds:
        sums[u] += k
        sums[v] += k
    found = []
    for i, symbol in enumerate(symbols):
        if symbol != "N" or sums[i] + hcounts[i] != 5:
            continue
        partners = [(v if u == i else u, k) for u, v, k in bonds if i in (u, v)]
        if hcounts[i] != 0 or any(k == 3 for _, k in partners):
            return None
        doubles = [symbols[j] for j, k in partners if k == 2]
        if "O" not in doubles or any(s not in ("C", "N", "O") for s in doubles):
            return None
        found.append(i)
    return found


def canonical_smiles(symbols, hcounts, bonds, oxides=()):
    mol = Chem.RWMol()
    for symbol, h in zip(symbols, hcounts):
        atom = Chem.Atom(symbol)
        atom.SetNoImplicit(True)
        atom.SetNumExplicitHs(h)
        mol.AddAtom(atom)
    charged = set()
    for n in oxides:
        o = next(v if u == n else u for u, v, k in bonds
                 if k == 2 and n in (u, v) and symbols[v if u == n else u] == "O")
        charged.add(frozenset((n, o)))
        mol.GetAtomWithIdx(n).SetFormalCharge(1)
        mol.GetAtomWithIdx(o).SetFormalCharge(-1)
    for u, v, k in bonds:
        mol.AddBond(u, v, BOND_TYPES[1 if frozenset((u, v)) in charged else k])
    Chem.SanitizeMol(mol)
    return Chem.MolToSmiles(mol)


def run_shard(args):
    """One geng res/mod shard: returns (set of SMILES, multigraphs read,
    multigraphs within valence, seconds)."""
    plan, res, mod = args
    RDLogger.DisableLog("rdApp.*")
    start = time.perf_counter()
    cmds = plan.commands(res, mod)
    procs = []
    prev = None
    for cmd in cmds:
        p = subprocess.Popen(cmd, stdin=prev, stdout=subprocess.PIPE, text=True)
        if prev is not None:
            prev.close()
        prev = p.stdout
        procs.append(p)
    seen = set()
    read = kept = 0
    for line in prev:
        fields = line.split()
        if not fields:
            continue
        read += 1
        nv, ne = int(fields[0]), int(fields[1])
        colours = fields[2:2 + nv]
        rest = fields[2 + nv:]
        bond_sums = [0] * nv
        bonds = []
        for i in range(ne):
            u, v, k = int(rest[3 * i]), int(rest[3 * i + 1]), int(rest[3 * i + 2])
            bonds.append((u, v, k))
            bond_sums[u] += k
            bond_sums[v] += k
        atom_valences = [plan.valences[int(c)] for c in colours]
        choices = hydrogen_choices(plan, atom_valences, bond_sums)
        if not choices:
            continue
        kept += 1
        symbols = [plan.elements[int(c)] for c in colours]
        for hcounts in choices:
            oxides = oxide_nitrogens(symbols, hcounts, bonds) if plan.charge_separated else []
            if oxides is None:
                continue
            try:
                seen.add(canonical_smiles(symbols, hcounts, bonds, oxides))
            except Exception as exc:  # a reference must not drop a molecule silently
                raise RuntimeError(f"RDKit rejected {symbols} H={hcounts} bonds={bonds}: {exc}")
    for p, cmd in zip(procs, cmds):
        if p.wait() != 0:
            raise RuntimeError(f"{' '.join(cmd)} exited with {p.returncode}")
    return seen, read, kept, time.perf_counter() - start


def nauty_version():
    try:
        out = subprocess.run(["dpkg-query", "-W", "-f=${Version}", "nauty"],
                             capture_output=True, text=True, check=True).stdout.strip()
        if out:
            return out
    except (OSError, subprocess.CalledProcessError):
        pass
    with open(tool("geng"), "rb") as f:
        return "geng-sha256-" + hashlib.sha256(f.read()).hexdigest()[:16]


def cache_path(formula_key, expanded, any_valence_h, charge_separated):
    with open(os.path.abspath(__file__), "rb") as f:
        script_hash = hashlib.sha256(f.read()).hexdigest()[:16]
    mode = ("x" + ("a" if any_valence_h else "")) if expanded else "s"
    mode += "c" if charge_separated else ""
    key = "|".join([formula_key, mode,
                    nauty_version(), dist_version("rdkit"), script_hash])
    digest = hashlib.sha256(key.encode()).hexdigest()[:20]
    return os.path.join(PROJECT_ROOT, ".reference-cache", f"{formula_key}-{mode}-{digest}.smi.gz")


def enumerate_isomers(counts, expanded, any_valence_h, charge_separated, jobs, stats):
    plan = Plan(counts, expanded, any_valence_h, charge_separated)
    if plan.empty():
        return set()
    # More shards than processes evens out geng's uneven res/mod split.
    mod = 1 if jobs == 1 else jobs * 8
    result = set()
    read = kept = 0
    start = time.perf_counter()
    shards = [(plan, res, mod) for res in range(mod)]
    if jobs == 1:
        outputs = map(run_shard, shards)
        pool = None
    else:
        pool = multiprocessing.Pool(jobs)
        outputs = pool.imap_unordered(run_shard, shards)
    for seen, r, k, _ in outputs:
        result |= seen
        read += r
        kept += k
    if pool is not None:
        pool.close()
        pool.join()
    if stats:
        cmds = plan.commands(0, 1)
        print("nauty_isomers: pipeline: " + " | ".join(
            " ".join([os.path.basename(c[0])] + c[1:]) for c in cmds), file=sys.stderr)
        print(f"nauty_isomers: {read} multigraphs, {kept} within valence, "
              f"{len(result)} compounds; {time.perf_counter() - start:.1f} s "
              f"with {jobs} process(es)", file=sys.stderr)
    return result


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("formula")
    parser.add_argument("--smiles", action="store_true", help="print the SMILES, not the count")
    parser.add_argument("--expanded-valence", action="store_true")
    parser.add_argument("--any-valence-h", action="store_true")
    parser.add_argument("--charge-separated", action="store_true")
    parser.add_argument("--jobs", type=int, default=min(2, os.cpu_count() or 1))
    parser.add_argument("--no-cache", action="store_true")
    parser.add_argument("--stats", action="store_true")
    args = parser.parse_args()
    try:
        counts = parse_formula(args.formula)
    except ValueError as exc:
        sys.exit(f"nauty_isomers: {exc}")
    key = hill(counts)
    if args.any_valence_h and not args.expanded_valence:
        sys.exit("nauty_isomers: --any-valence-h only goes with --expanded-valence")
    path = None if args.no_cache else cache_path(key, args.expanded_valence,
                                                 args.any_valence_h, args.charge_separated)
    if path and os.path.exists(path):
        with gzip.open(path, "rt") as f:
            smiles = [line.rstrip("\n") for line in f if line.strip()]
        if args.stats:
            print(f"nauty_isomers: {len(smiles)} compounds from cache {path}", file=sys.stderr)
    else:
        smiles = sorted(enumerate_isomers(counts, args.expanded_valence, args.any_valence_h,
                                          args.charge_separated, max(1, args.jobs), args.stats))
        if path:
            os.makedirs(os.path.dirname(path), exist_ok=True)
            tmp = f"{path}.{os.getpid()}.tmp"
            with gzip.open(tmp, "wt") as f:
                f.writelines(s + "\n" for s in smiles)
            os.replace(tmp, path)
    if args.smiles:
        sys.stdout.writelines(s + "\n" for s in smiles)
    else:
        print(len(smiles))


if __name__ == "__main__":
    main()
