#!/usr/bin/env python3
"""Read an SD file with RDKit (PyPI rdkit) and compare each record with the
SMILES in its `smiles` data field: same heavy atoms (elements), same bonds
(count and orders, as a Kekule form may differ only by aromaticity), same
implicit H per element, same canonical SMILES. Also checks that each record
has 2D coordinates (conformer not 3D, not every atom at the origin).

Usage: check_sdf.py [required fields, comma-separated] < file.sdf

Prints one JSON object: {"records": N, "problems": [text, ...],
"fields": [{field: value} per record]}.
"""
import json
import sys

from rdkit import Chem

required = [f for f in (sys.argv[1].split(",") if len(sys.argv) > 1 else []) if f]
data = sys.stdin.read()
supplier = Chem.SDMolSupplier()
supplier.SetData(data, sanitize=True, removeHs=False)
problems = []
fields = []
n = 0
for i, mol in enumerate(supplier):
    n += 1
    if mol is None:
        problems.append(f"record {i + 1}: RDKit could not read it")
        fields.append({})
        continue
    props = mol.GetPropsAsDict()
    fields.append({k: str(v) for k, v in props.items()})
    for f in required:
        if f not in props:
            problems.append(f"record {i + 1}: no field {f}")
    smi = str(props.get("smiles", ""))
    ref = Chem.MolFromSmiles(smi)
    if ref is None:
        problems.append(f"record {i + 1}: RDKit cannot parse its smiles field {smi!r}")
        continue
    got = Chem.MolToSmiles(mol)
    want = Chem.MolToSmiles(ref)
    if got != want:
        problems.append(f"record {i + 1}: canonical SMILES {got} from the molfile, {want} from the field")
    elems = sorted(a.GetSymbol() for a in mol.GetAtoms())
    relems = sorted(a.GetSymbol() for a in ref.GetAtoms())
    if elems != relems:
        problems.append(f"record {i + 1}: atoms {elems} against {relems}")
    if mol.GetNumBonds() != ref.GetNumBonds():
        problems.append(f"record {i + 1}: {mol.GetNumBonds()} bonds against {ref.GetNumBonds()}")
    hs = sorted((a.GetSymbol(), a.GetTotalNumHs()) for a in mol.GetAtoms())
    rhs = sorted((a.GetSymbol(), a.GetTotalNumHs()) for a in ref.GetAtoms())
    if hs != rhs:
        problems.append(f"record {i + 1}: H per atom {hs} against {rhs}")
    conf = mol.GetConformer()
    if conf.Is3D():
        problems.append(f"record {i + 1}: conformer is 3D")
    if mol.GetNumAtoms() > 1 and all(
        abs(conf.GetAtomPosition(k).x) + abs(conf.GetAtomPosition(k).y) < 1e-6
        for k in range(mol.GetNumAtoms())
    ):
        problems.append(f"record {i + 1}: no coordinates")
print(json.dumps({"records": n, "problems": problems, "fields": fields}))
