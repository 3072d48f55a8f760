#!/usr/bin/env python3
"""Refit the 13C increment tables (fragment-library/carbon-*.toml) on the
NMRShiftDB2 v2 dev split.

Input: the terms the predictor sums per carbon symmetry class, as written by

    cargo run --release --example carbon_fit_data > /tmp/carbon-terms.jsonl

Model (the predictor's, src/predict/carbon.rs): shift = base[centre class]
+ sum over atoms within four bonds of inc[family or class][atom type][distance]
+ sum over two-bond paths of pair[family][alpha type, bond][beta type]
+ ring[family][smallest ring size] + sum over the atom groups (an atom's
type with its neighbours' types and bonds) at 0, 1 and 2 bonds of
group[class (distance 0) or family][group][distance]. It is linear in the table values, so the
fit is least squares with three refinements:

* assignment: the data give no atom assignment, only shifts with H counts;
  within each H count, predicted carbons and observed entries (both expanded
  by their carbon counts) are paired in sorted order, starting from the
  current tables' predictions, and the pairing is redone after each fit
  (a fixed number of rounds);
* ridge: a small penalty on family increments and ring corrections, a larger
  one on class-specific deviations (a class row exists only where its data
  ask for one), so that rare terms shrink towards zero / the family value;
* path terms: an increment per two-bond path centre-alpha-beta (by the
  alpha atom's type, whether its bond to the centre is multiple, and the
  beta atom's type), so that a substituent on the neighbouring ring or
  double-bond carbon differs from the second atom of a substituent;
* group terms: an increment per atom group (type plus neighbour types and
  bonds) at 0 (the centre itself: carbonyl subtypes, branching), 1 and 2
  bonds; a group term exists only where the fit data hold it on at least
  MIN_GROUP_ROWS carbons, with ridge RIDGE_GROUP;
* Huber weights (IRLS, k = HUBER ppm) so that a few wrong deposits do not
  drag the tables.

Sigma per centre class: the root mean square residual of that class (the
scorer reads sigma as the typical error).

Usage:
    python3 scripts/fit_carbon.py TERMS.jsonl --validate   # fit even ids, measure odd (and back)
    python3 scripts/fit_carbon.py TERMS.jsonl --validate --set RIDGE_GROUP=10 --set MIN_GROUP_ROWS=5
        # the same with other settings (how the committed ones were chosen)
    python3 scripts/fit_carbon.py TERMS.jsonl --write      # fit all, write the TOML files
    python3 scripts/fit_carbon.py TERMS.jsonl --write --half even   # fit even ids only (held-out ranking of odd ids)
    python3 scripts/fit_carbon.py TERMS.jsonl --write --half even --out /tmp/lib-even
        # the same, written to a folder for LIBRARY=/tmp/lib-even (no rebuild)

Needs numpy; uses scipy's sparse solver when installed (same result,
minutes faster), else conjugate gradients. Deterministic (no random numbers).
"""
import json
import sys
import tomllib
from collections import defaultdict

import numpy as np

ROUNDS = 6
HUBER = 4.0
RIDGE_FAMILY = 2.0
RIDGE_CLASS = 40.0
RIDGE_BASE = 1e-3
RIDGE_PAIR = 10.0
MIN_PAIR_ROWS = 10
MIN_CLASS_ROWS = 30  # class-specific increment rows need this many carbons
MIN_FAMILY_ROWS = 3
RIDGE_GROUP = 5.0  # kept after a cross-validated comparison (fragment-library/README.md)
MIN_GROUP_ROWS = 3  # carbons carrying a group term in the fit data

LIB = "fragment-library"
FILES = {
    "sp3": "carbon-sp3.toml",
    "alkene": "carbon-alkene.toml",
    "cumulene": "carbon-special.toml",
    "aro6": "carbon-benzene.toml",
    "aro5": "carbon-heteroaromatic.toml",
    "carbonyl": "carbon-special.toml",
    "imine": "carbon-special.toml",
    "thione": "carbon-special.toml",
    "nitrile": "carbon-special.toml",
    "alkyne": "carbon-special.toml",
    "other": "carbon-special.toml",
}
HETERO_TYPES = {"N.ar", "N.ar3", "O.ar", "S.ar"}


def family(centre):
    return centre.split(".")[0]


def load(path):
    out = []
    with open(path) as f:
        for line in f:
            out.append(json.loads(line))
    return out


class Model:
    """Parameter index: ('base', class), ('fam', fam, type, d), ('cls', class, type, d),
    ('ring', fam, size)."""

    def __init__(self, groups=None):
        self.index = {}
        self.names = []
        # group keys with enough carbons in the fit data (None: all)
        self.groups = groups

    def col(self, key):
        i = self.index.get(key)
        if i is None:
            i = len(self.names)
            self.index[key] = i
            self.names.append(key)
        return i

    def row(self, cls, add=True):
        """Columns of one class (list of (col, value))."""
        cols = defaultdict(float)
        get = self.col if add else self.index.get
        fam = family(cls["centre"])
        c = get(("base", cls["centre"]))
        if c is not None:
            cols[c] += 1.0
        for t, d in cls["terms"]:
            for key in (("fam", fam, t, d), ("cls", cls["centre"], t, d)):
                c = get(key)
                if c is not None:
                    cols[c] += 1.0
        for via, multiple, t in cls.get("paths", []):
            for key in (("pair", fam, via, bool(multiple), t), ("pcls", cls["centre"], via, bool(multiple), t)):
                c = get(key)
                if c is not None:
                    cols[c] += 1.0
        for g, d in cls.get("groups", []):
            key = ("grp", cls["centre"] if d == 0 else fam, d, g)
            if self.groups is not None and key not in self.groups:
                continue
            c = get(key)
            if c is not None:
                cols[c] += 1.0
        r = cls["ring"]
        if 3 <= r <= 8:
            c = get(("ring", fam, r))
            if c is not None:
                cols[c] += 1.0
        return list(cols.items())


def assign(compound, preds):
    """Pair predicted classes with observed shifts within each H count
    (sorted order); returns per class (index, mean observed shift, carbons)."""
    by_h = defaultdict(list)
    for i, cls in enumerate(compound["classes"]):
        for _ in range(cls["n"]):
            by_h[cls["h"]].append((preds[i], i))
    obs_h = defaultdict(list)
    for s, h, n in compound["obs"]:
        obs_h[h].extend([s] * n)
    got = defaultdict(list)
    for h, plist in by_h.items():
        o = sorted(obs_h.get(h, []))
        if len(o) != len(plist):
            continue
        plist.sort()
        for (_, i), x in zip(plist, o):
            got[i].append(x)
    return [(i, sum(v) / len(v), len(v)) for i, v in got.items()]


def predict(model, theta, compound):
    out = []
    for cls in compound["classes"]:
        out.append(sum(theta[c] * v for c, v in model.row(cls, add=False)))
    return out


def group_counts(compounds):
    """Carbons per group key in `compounds`."""
    n = defaultdict(int)
    for c in compounds:
        for cls in c["classes"]:
            fam = family(cls["centre"])
            for g, d in cls.get("groups", []):
                n[("grp", cls["centre"] if d == 0 else fam, d, g)] += cls["n"]
    return n


def solve(model, rows, y, w):
    """Weighted ridge least squares on the normal equations (the design
    matrix is sparse): scipy's sparse direct solver when installed, else
    Jacobi-preconditioned conjugate gradients."""
    p = len(model.names)
    ridge = np.zeros(p)
    for i, k in enumerate(model.names):
        ridge[i] = {"base": RIDGE_BASE, "fam": RIDGE_FAMILY, "cls": RIDGE_CLASS, "ring": RIDGE_FAMILY,
                    "pair": RIDGE_PAIR, "pcls": RIDGE_CLASS, "grp": RIDGE_GROUP}[k[0]]
    ri, ci, vals = [], [], []
    for r, cols in enumerate(rows):
        for c, v in cols:
            ri.append(r)
            ci.append(c)
            vals.append(v)
    ri = np.array(ri)
    ci = np.array(ci)
    vals = np.array(vals)
    n = len(rows)
    try:
        import scipy.sparse as sp
        import scipy.sparse.linalg as spl

        x = sp.csr_matrix((vals, (ri, ci)), shape=(n, p))
        a = (x.T @ sp.diags(w) @ x + sp.diags(ridge)).tocsc()
        return spl.spsolve(a, x.T @ (w * y))
    except ImportError:
        pass

    def xv(theta):
        return np.bincount(ri, weights=vals * theta[ci], minlength=n)

    def xtv(r):
        return np.bincount(ci, weights=vals * r[ri], minlength=p)

    def a(theta):
        return xtv(w * xv(theta)) + ridge * theta

    b = xtv(w * y)
    diag = np.bincount(ci, weights=vals * vals * w[ri], minlength=p) + ridge
    theta = np.zeros(p)
    r = b - a(theta)
    z = r / diag
    d = z.copy()
    rz = r @ z
    for _ in range(3000):
        ad = a(d)
        alpha = rz / (d @ ad)
        theta += alpha * d
        r -= alpha * ad
        if np.sqrt(r @ r) < 1e-6 * np.sqrt(b @ b):
            break
        z = r / diag
        rz_new = r @ z
        d = z + (rz_new / rz) * d
        rz = rz_new
    return theta


def fit(compounds):
    model = Model({k for k, n in group_counts(compounds).items() if n >= MIN_GROUP_ROWS})
    class_rows = [[model.row(cls) for cls in c["classes"]] for c in compounds]
    preds = [[cls["pred"] for cls in c["classes"]] for c in compounds]
    theta = None
    huber = None
    for rnd in range(ROUNDS):
        rows, y, w, keys = [], [], [], []
        for ci, c in enumerate(compounds):
            for i, target, n in assign(c, preds[ci]):
                rows.append(class_rows[ci][i])
                y.append(target)
                w.append(n)
                keys.append(c["classes"][i]["centre"])
        y = np.array(y)
        w = np.array(w, dtype=float)
        if huber is not None and len(huber) == len(y):
            w = w * huber
        theta = solve(model, rows, y, w)
        res = np.array([sum(theta[c] * v for c, v in r) for r in rows]) - y
        a = np.abs(res)
        huber = np.where(a <= HUBER, 1.0, HUBER / np.maximum(a, 1e-9))
        preds = [predict(model, theta, c) for c in compounds]
        print(f"round {rnd + 1}: {len(y)} classes, weighted MAE of assigned {np.average(a, weights=np.array([x for x in w])):.3f}",
              file=sys.stderr)
    # per-column data counts (carbons) and per-class residual RMS
    counts = np.zeros(len(model.names))
    rms = defaultdict(lambda: [0.0, 0.0])
    for ci, c in enumerate(compounds):
        for i, target, n in assign(c, preds[ci]):
            for col, _ in class_rows[ci][i]:
                counts[col] += n
            e = preds[ci][i] - target
            rms[c["classes"][i]["centre"]][0] += n * e * e
            rms[c["classes"][i]["centre"]][1] += n
    return model, theta, counts, {k: (np.sqrt(s / n), n) for k, (s, n) in rms.items()}


def measure(model, theta, compounds):
    """The test's measure: all carbons, sorted lists compared by position."""
    by_kind = defaultdict(lambda: [0.0, 0])
    tot = [0.0, 0]
    for c in compounds:
        pr = predict(model, theta, c)
        p = sorted((round(pr[i], 1), cls["kind"]) for i, cls in enumerate(c["classes"]) for _ in range(cls["n"]))
        o = sorted(s for s, h, n in c["obs"] for _ in range(n))
        if len(p) != len(o):
            continue
        for (s, k), x in zip(p, o):
            by_kind[k][0] += abs(s - x)
            by_kind[k][1] += 1
            tot[0] += abs(s - x)
            tot[1] += 1
    return tot[0] / tot[1], {k: v[0] / v[1] for k, v in sorted(by_kind.items())}, tot[1]


def hand_rows():
    """The hand-entered rows of the current files (kept for centres the data
    do not reach)."""
    base = {}
    for f in sorted(set(FILES.values())):
        with open(f"{LIB}/{f}", "rb") as fh:
            t = tomllib.load(fh)
        for r in t.get("base", []):
            base[r["centre"]] = r
    return base


def hand_kept(kind):
    """Hand-entered rows of one kind ("increment", "group") in the current
    files (source not "refitted ..."): kept where the fit writes no such row."""
    out = []
    for f in sorted(set(FILES.values())):
        with open(f"{LIB}/{f}", "rb") as fh:
            t = tomllib.load(fh)
        out += [r for r in t.get(kind, []) if not r["source"].startswith("refitted")]
    return out


def write(model, theta, counts, rms, n_compounds, n_carbons, out=LIB):
    hand = hand_rows()
    src = lambda n: (f"refitted on NMRShiftDB2 dev (n = {int(n)} carbons; Huber-weighted ridge least squares, "
                     f"scripts/fit_carbon.py)")
    files = defaultdict(list)
    val = {k: theta[i] for i, k in enumerate(model.names)}
    cnt = {k: counts[i] for i, k in enumerate(model.names)}
    # base rows: every class with data; hand rows for the rest (families)
    centres = sorted({k[1] for k in model.names if k[0] == "base"})
    for c in centres:
        sigma, n = rms.get(c, (None, 0))
        if n < 5:
            continue
        files[FILES[family(c)]].append(
            f'[[base]]\ncentre = "{c}"\nshift = {val[("base", c)]:.2f}\nsigma = {max(sigma, 0.5):.2f}\n'
            f'source = "{src(n)}; sigma = RMS residual of this class"\n')
    for c, r in sorted(hand.items()):
        if "." in c:
            if rms.get(c, (None, 0))[1] >= 5:
                continue
        files[FILES[family(c)]].append(
            f'[[base]]\ncentre = "{c}"\nshift = {r["shift"]}\nsigma = {r["sigma"]}\nsource = "{r["source"]}"\n')
    # family increments
    fam_terms = defaultdict(dict)
    for k in model.names:
        if k[0] == "fam":
            fam_terms[(k[1], k[2])][k[3]] = k
    for (fam, t), ks in sorted(fam_terms.items()):
        n = max(cnt[k] for k in ks.values())
        if n < MIN_FAMILY_ROWS:
            continue
        v = [val[ks[d]] if d in ks else 0.0 for d in (1, 2, 3, 4)]
        fname = FILES[fam]
        if fam == "aro6" and t in HETERO_TYPES:
            fname = "carbon-heteroaromatic.toml"
        files[fname].append(
            f'[[increment]]\ncentre = "{fam}"\nneighbour = "{t}"\n'
            f'by_distance = [{", ".join(f"{x:.2f}" for x in v)}]\nsource = "{src(n)}"\n')
    # class increments (family value + class deviation) where the data ask
    cls_terms = defaultdict(dict)
    for k in model.names:
        if k[0] == "cls":
            cls_terms[(k[1], k[2])][k[3]] = k
    for (c, t), ks in sorted(cls_terms.items()):
        n = max(cnt[k] for k in ks.values())
        if n < MIN_CLASS_ROWS:
            continue
        fam = family(c)
        dev = [val[ks[d]] if d in ks else 0.0 for d in (1, 2, 3, 4)]
        if max(abs(x) for x in dev) < 0.3:
            continue
        v = [val.get(("fam", fam, t, d), 0.0) + dev[d - 1] for d in (1, 2, 3, 4)]
        fname = FILES[fam]
        if fam == "aro6" and t in HETERO_TYPES:
            fname = "carbon-heteroaromatic.toml"
        files[fname].append(
            f'[[increment]]\ncentre = "{c}"\nneighbour = "{t}"\n'
            f'by_distance = [{", ".join(f"{x:.2f}" for x in v)}]\nsource = "{src(n)}"\n')
    written = {(c, t) for (c, t) in fam_terms} | {(c, t) for (c, t) in cls_terms}
    for r in hand_kept("increment"):
        if (r["centre"], r["neighbour"]) not in written:
            files[FILES[family(r["centre"])]].append(
                f'[[increment]]\ncentre = "{r["centre"]}"\nneighbour = "{r["neighbour"]}"\n'
                f'by_distance = [{", ".join(f"{x:.2f}" for x in r["by_distance"])}]\nsource = "{r["source"]}"\n')
    for k in model.names:
        if k[0] == "pair" and cnt[k] >= MIN_PAIR_ROWS and abs(val[k]) >= 0.05:
            _, fam, via, multiple, t = k
            fname = FILES[fam]
            if fam == "aro6" and (t in HETERO_TYPES or via in HETERO_TYPES):
                fname = "carbon-heteroaromatic.toml"
            files[fname].append(
                f'[[pair]]\ncentre = "{fam}"\nvia = "{via}"\nbond = "{"multiple" if multiple else "single"}"\n'
                f'neighbour = "{t}"\nincrement = {val[k]:.2f}\nsource = "{src(cnt[k])}"\n')
    for k in model.names:
        if k[0] == "pcls" and cnt[k] >= MIN_CLASS_ROWS and abs(val[k]) >= 0.3:
            _, c, via, multiple, t = k
            fam = family(c)
            fname = FILES[fam]
            if fam == "aro6" and (t in HETERO_TYPES or via in HETERO_TYPES):
                fname = "carbon-heteroaromatic.toml"
            v = val.get(("pair", fam, via, multiple, t), 0.0) + val[k]
            files[fname].append(
                f'[[pair]]\ncentre = "{c}"\nvia = "{via}"\nbond = "{"multiple" if multiple else "single"}"\n'
                f'neighbour = "{t}"\nincrement = {v:.2f}\nsource = "{src(cnt[k])}"\n')
    fitted = {(k[1], k[2], k[3]) for k in model.names if k[0] == "grp" and abs(val[k]) >= 0.05}
    for r in hand_kept("group"):
        if (r["centre"], r["distance"], r["atom"]) not in fitted:
            files[FILES[family(r["centre"])]].append(
                f'[[group]]\ncentre = "{r["centre"]}"\ndistance = {r["distance"]}\natom = "{r["atom"]}"\n'
                f'increment = {r["increment"]}\nsource = "{r["source"]}"\n')
    for k in sorted((k for k in model.names if k[0] == "grp"), key=lambda k: (k[1], k[2], k[3])):
        if abs(val[k]) < 0.05:
            continue
        _, centre, d, g = k
        fname = FILES[family(centre)]
        if family(centre) == "aro6" and any(t in g for t in HETERO_TYPES):
            fname = "carbon-heteroaromatic.toml"
        files[fname].append(
            f'[[group]]\ncentre = "{centre}"\ndistance = {d}\natom = "{g}"\nincrement = {val[k]:.2f}\n'
            f'source = "{src(cnt[k])}"\n')
    for k in model.names:
        if k[0] == "ring" and cnt[k] >= MIN_FAMILY_ROWS:
            files[FILES[k[1]]].append(
                f'[[ring]]\ncentre = "{k[1]}"\nsize = {k[2]}\ncorrection = {val[k]:.2f}\nsource = "{src(cnt[k])}"\n')
    heads = {
        "carbon-sp3.toml": "13C shifts of sp3 carbon: Grant & Paul's additive rule (J. Am. Chem. Soc. 1964, 86, 2984),\n"
                           "# base + alpha/beta/gamma/delta increments per atom type, branching as class rows.",
        "carbon-alkene.toml": "13C shifts of alkene carbon: ethylene-based substituent increments by distance.",
        "carbon-benzene.toml": "13C shifts of benzene-ring carbon: ipso/ortho/meta/para increments of each substituent's\n"
                               "# first atom (1, 2, 3, 4 bonds from the ring carbon).",
        "carbon-heteroaromatic.toml": "13C shifts of heteroaromatic ring carbon (pyridine, furan, thiophene, pyrrole, azoles):\n"
                                      "# increments of ring heteroatoms by distance; five-ring base.",
        "carbon-special.toml": "13C shifts of carbonyl, imine, thiocarbonyl, nitrile, alkyne and cumulated carbon:\n"
                               "# a base per kind and H count plus increments of the atoms within four bonds.",
    }
    for fname in sorted(set(FILES.values())):
        text = (f"# {heads[fname]}\n#\n# Values refitted on the NMRShiftDB2 v2 dev split ({n_compounds} compounds, "
                f"{n_carbons} carbons)\n# by scripts/fit_carbon.py; fragment-library/README.md, \"Refit of the 13C tables\",\n"
                f"# gives the method, the data and the residuals. Rows not reached by the data keep their\n"
                f"# hand-entered value and source.\n\n")
        text += "\n".join(files[fname])
        with open(f"{out}/{fname}", "w") as f:
            f.write(text)


TUNABLE = ("RIDGE_FAMILY", "RIDGE_CLASS", "RIDGE_PAIR", "RIDGE_GROUP",
           "MIN_PAIR_ROWS", "MIN_CLASS_ROWS", "MIN_FAMILY_ROWS", "MIN_GROUP_ROWS")


def apply_settings(argv):
    """--set NAME=VALUE (repeatable): override one of TUNABLE for this run
    (to choose them by the cross-validated figure, see --validate)."""
    for i, a in enumerate(argv):
        if a == "--set":
            name, value = argv[i + 1].split("=")
            if name not in TUNABLE:
                sys.exit(f"fit_carbon.py: --set {name}: not one of {', '.join(TUNABLE)}")
            globals()[name] = type(globals()[name])(float(value))
            print(f"setting {name} = {globals()[name]}", file=sys.stderr)


def main():
    path = sys.argv[1]
    apply_settings(sys.argv)
    compounds = load(path)
    kinds = ["C=O/C=N/C=S", "aromatic/alkene sp2", "sp", "sp3-O/N/halogen", "plain sp3"]
    if "--validate" in sys.argv:
        even = [c for c in compounds if c["id"] % 2 == 0]
        odd = [c for c in compounds if c["id"] % 2 == 1]
        for name, a, b in (("even", even, odd), ("odd", odd, even)):
            model, theta, _, _ = fit(a)
            m_in, _, _ = measure(model, theta, a)
            m_out, by, n = measure(model, theta, b)
            print(f"fit on {name} ids ({len(a)} compounds): MAE {m_in:.2f} on the fit half, "
                  f"{m_out:.2f} on the other half ({n} carbons)")
            print("  held out by type: " + ", ".join(f"{kinds[k]} {v:.2f}" for k, v in by.items()))
    if "--write" in sys.argv:
        # --half even|odd: fit on that half of the ids only (tables for a
        # held-out ranking of the other half; do not commit them).
        if "--half" in sys.argv:
            half = sys.argv[sys.argv.index("--half") + 1]
            parity = {"even": 0, "odd": 1}[half]
            compounds = [c for c in compounds if c["id"] % 2 == parity]
        model, theta, counts, rms = fit(compounds)
        m, by, n = measure(model, theta, compounds)
        print(f"fit on all ({len(compounds)} compounds): MAE {m:.2f} ({n} carbons)")
        print("  by type: " + ", ".join(f"{kinds[k]} {v:.2f}" for k, v in by.items()))
        for c, (s, k) in sorted(rms.items()):
            print(f"  sigma {c}: {s:.2f} (n = {int(k)})")
        # --out DIR: write the files there (for LIBRARY=DIR) instead of
        # over the committed tables (hand rows are still read from those).
        out = LIB
        if "--out" in sys.argv:
            import os

            out = sys.argv[sys.argv.index("--out") + 1]
            os.makedirs(out, exist_ok=True)
        write(model, theta, counts, rms, len(compounds), n, out)


if __name__ == "__main__":
    main()
