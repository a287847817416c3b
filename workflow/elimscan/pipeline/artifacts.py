"""The contents of the files in an output folder, built in memory: {relative path: bytes}.

Trajectories are extended XYZ (``ase.io.read(path, index=":")`` opens them, energies and driven
coordinates in each frame's info); conformer ensembles are SDF with energies as properties. No file
I/O here: the CLI and the batch driver write what these functions return.
"""

from __future__ import annotations

import io

import numpy as np
from ase import Atoms
from rdkit import Chem
from rdkit.Geometry import Point3D

from elimscan.units import KCAL_MOL_PER_HARTREE

Files = dict[str, bytes]


def xyz_bytes(frames: list[Atoms], infos: list[dict], method_label: str) -> bytes:
    """Return frames with their info dicts (None values dropped) as one extended XYZ file."""
    import ase.io

    images = []
    for atoms, info in zip(frames, infos):
        image = atoms.copy()
        image.calc = None
        image.info.update({k: v for k, v in info.items() if v is not None})
        image.info["method"] = method_label
        images.append(image)
    buffer = io.StringIO()
    ase.io.write(buffer, images, format="extxyz")
    return buffer.getvalue().encode()


def conformer_sdf(name: str, analysis, method_label: str) -> bytes:
    """Return a substrate's conformer ensemble as SDF (energy_hartree and relative_energy_kcal_mol properties)."""
    lowest = analysis.ensemble.lowest.energy_hartree
    buffer = io.StringIO()
    writer = Chem.SDWriter(buffer)
    for conformer in analysis.ensemble.conformers:
        mol = Chem.Mol(analysis.substrate.mol)
        conf = mol.GetConformer()
        for i, (x, y, z) in enumerate(conformer.atoms.positions):
            conf.SetAtomPosition(i, Point3D(float(x), float(y), float(z)))
        mol.SetProp("_Name", f"{name} conformer {conformer.conformer_id}")
        mol.SetDoubleProp("energy_hartree", conformer.energy_hartree)
        mol.SetDoubleProp("relative_energy_kcal_mol", (conformer.energy_hartree - lowest) * KCAL_MOL_PER_HARTREE)
        mol.SetProp("source", conformer.source)
        mol.SetProp("method", method_label)
        writer.write(mol)
    writer.close()
    return buffer.getvalue().encode()


def substrate_files(name: str, analysis, method_label: str) -> Files:
    """Return a substrate's conformer SDF and one XYZ trajectory per dihedral scan."""
    from elimscan.pipeline.names import conformer_file_name, scan_file_name

    files = {conformer_file_name(name): conformer_sdf(name, analysis, method_label)}
    for c in analysis.classes:
        for k, scan in enumerate(c.scans):
            points = [p for p in scan.points if p.atoms is not None]
            files[scan_file_name(name, c.beta_class.class_id, k)] = xyz_bytes(
                [p.atoms for p in points],
                [{"dihedral_deg": p.dihedral_deg, "target_deg": p.target_deg, "energy_hartree": p.energy_hartree,
                  "relative_energy_kcal_mol": (p.energy_hartree - analysis.global_minimum_hartree) * KCAL_MOL_PER_HARTREE,
                  "status": p.status, "class_id": c.beta_class.class_id,
                  "dihedral_atoms": " ".join(map(str, scan.dihedral_atoms))} for p in points],
                method_label)
    return files


def base_file(name: str, relaxed, method_label: str) -> tuple[str, bytes] | None:
    """Return (relative path, XYZ) of a relaxed base, or None when it failed."""
    from elimscan.pipeline.names import safe_name

    if relaxed.atoms is None:
        return None
    return (f"structures/base-{safe_name(name)}.xyz",
            xyz_bytes([relaxed.atoms], [{"name": name, "energy_hartree": relaxed.record.energy_hartree}], method_label))


def end_files(block, path, zero_hartree: float, class_id: str, approach: str, method_label: str) -> Files:
    """Return the XYZ of a path's base-substrate complex and of its product side (the last path point), each one
    frame with its energy (hartree, and kcal/mol above the job's zero) and what it is in the frame's info."""
    files: Files = {}
    ends = [(block.complex_file, path.complex.atoms, path.complex.energy_hartree, "base-substrate complex")]
    if path.points:
        reached = getattr(block, "reaches_products", None) is not False
        ends.append((block.product_file, path.points[-1].atoms, path.points[-1].energy_hartree,
                     "product side (last path point)" if reached else "last path point (products not reached)"))
    for name, atoms, energy, what in ends:
        if name is None or atoms is None:
            continue
        files[name] = xyz_bytes([atoms], [{"energy_hartree": energy, "what": what, "class_id": class_id,
                                           "approach": approach,
                                           "relative_energy_kcal_mol": (energy - zero_hartree) * KCAL_MOL_PER_HARTREE}],
                                method_label)
    return files


def path_files(job, paths: dict, method_label: str, mode_amplitude_A: float = 0.3, mode_frames: int = 13) -> Files:
    """Return each computed path (XYZ), its complex and product side (XYZ) and each saddle with frames along its
    imaginary mode."""
    files: Files = {}
    zero = job.reference_energy_hartree
    blocks = [(record.class_id, approach, getattr(record, approach)) for record in job.beta_hydrogens
              for approach in ("anti", "syn")]
    if job.substitution is not None:
        blocks.append(("substitution", "backside", job.substitution))
    for class_id, approach, block in blocks:
        path = paths.get((class_id, approach))
        if block.path_file is None or path is None or not hasattr(path, "points"):
            continue
        files[block.path_file] = xyz_bytes(
            [p.atoms for p in path.points],
            [{"coordinate_A": p.coordinate_A, "energy_hartree": p.energy_hartree,
              "relative_energy_kcal_mol": (p.energy_hartree - zero) * KCAL_MOL_PER_HARTREE,
              "class_id": class_id, "approach": approach, **p.distances} for p in path.points],
            method_label)
        if hasattr(path, "complex"):
            files.update(end_files(block, path, zero, class_id, approach, method_label))
        saddle = path.saddle
        if block.saddle_file is None or saddle.atoms is None:
            continue
        frames = [saddle.atoms]
        infos = [{"energy_hartree": saddle.energy_hartree, "frame": "saddle", "verified": saddle.verified,
                  "imaginary_cm1": saddle.imaginary_cm1}]
        if saddle.mode is not None:
            for amplitude in np.linspace(-mode_amplitude_A, mode_amplitude_A, mode_frames):
                frame = saddle.atoms.copy()
                frame.positions = frame.positions + amplitude * saddle.mode
                frames.append(frame)
                infos.append({"frame": "mode", "mode_amplitude_A": float(amplitude)})
        files[block.saddle_file] = xyz_bytes(frames, infos, method_label)
    return files
