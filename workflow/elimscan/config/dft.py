"""The optional DFT tier: PySCF single points on the GFN2-xTB saddles of each job."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, field_validator, model_validator

from elimscan.config.frozen import Frozen

#: composite levels: a functional key that fixes its own basis and dispersion (they were fitted together and are
#: not to be mixed with others). wB97X-3c (Müller, Hansen & Grimme, J. Chem. Phys. 158, 014103 (2023)): wB97X-V
#: without VV10, D4 with the composite's own parameters, the vDZP basis with its ECPs (engines/dftbasis.py has
#: where each part comes from). ``dispersion: d4`` here means D4 with the composite's parameters, not wB97X's.
COMPOSITE_PARTS: dict[str, dict[str, str]] = {"wb97x-3c": {"dispersion": "d4", "basis": "vdzp"}}
#: basis keys whose data come from the basis-set-exchange package (engines/dftbasis.py): its version then enters
#: the job key beside PySCF's (versions.numeric_versions)
BSE_BASIS_KEYS = frozenset({"vdzp"})


def _normalised(value: Any) -> Any:
    """Return a text setting stripped and lower-cased, with the Greek omega written 'w'; anything else unchanged."""
    return value.strip().lower().replace("ω", "w") if isinstance(value, str) else value


class DftConfig(Frozen):
    """Optional DFT single points (PySCF) on the GFN2-xTB saddles of each job; off by default."""

    enabled: bool = False
    #: exchange-correlation functional (PySCF name), or the composite level wb97x-3c, which fixes dispersion (d4,
    #: with its own parameters) and basis (vdzp) itself: either left out, or written as those values
    functional: Literal["b3lyp", "pbe0", "wb97x-3c"] = "b3lyp"
    #: dispersion correction (pyscf-dispersion): D3 with Becke-Johnson damping, D4, or none
    dispersion: Literal["d3bj", "d4", "none"] = "d3bj"
    #: basis set: diffuse functions are needed for the anionic bases (def2-SVP without them gave the wrong
    #: anti/syn order in a scratch test); def2-TZVP is the check level. vdzp belongs to wb97x-3c alone. It has no
    #: diffuse functions either: it is not refused as def2-SVP is, because the composite was fitted with it as it
    #: is (its authors call it virtually free of basis-set superposition error, as quoted in PySCF pull request
    #: 2085; not checked against the paper here), but whether it describes the anionic bases well enough for these
    #: barriers is a question for the calibration set, not settled
    basis: Literal["def2-svpd", "def2-tzvp", "def2-tzvpd", "vdzp"] = "def2-svpd"
    #: density fitting (RI) of the Coulomb and exchange integrals
    density_fit: bool = True
    #: 'pcm' = IEF-PCM at the dielectric constant of the job's solvent; 'none' = gas phase (refused for jobs
    #: with a free ion: ion-dipole binding would dominate)
    solvation: Literal["pcm", "none"] = "pcm"
    #: dielectric constant for IEF-PCM; None = take it from the table for the job's solvent (engines/dft.py)
    dielectric_constant: float | None = Field(None, gt=1)
    #: single points on this many of the lowest GFN2-xTB saddles of each product (by GFN2-xTB energy)
    saddles_per_product: int = Field(3, ge=1)
    #: also compute the free substrate and free base, so that barrier_dft_kcal_mol is absolute; otherwise it
    #: is relative to the lowest DFT saddle of the job (all that the product mix needs)
    absolute_barriers: bool = False
    #: what the tier does with the chosen saddles: 'single-point' = DFT single points at the GFN2-xTB geometries;
    #: 'reoptimise' = re-optimise the lowest verified GFN2-xTB saddle of each product (and of SN2) at DFT with
    #: Sella from its GFN2-xTB Hessian, verify it (analytic DFT Hessian, both-way check) and take the product mix
    #: from the verified DFT saddles (hours per job: an overnight option)
    saddles: Literal["single-point", "reoptimise"] = "single-point"
    #: reoptimise: verified GFN2-xTB saddles re-optimised per product (the lowest by GFN2-xTB energy)
    reoptimise_per_product: int = Field(1, ge=1)
    #: reoptimise: Sella convergence, largest force (eV/Å); 0.02 eV/Å ~ 4e-4 hartree/bohr, near the usual
    #: quantum-chemistry default for a largest force (common practice) and above the noise of a level-3 DFT grid
    reoptimise_fmax_eV_per_A: float = Field(0.02, gt=0)
    #: reoptimise: Sella steps at most (each one DFT gradient)
    reoptimise_max_steps: int = Field(100, ge=1)
    #: reoptimise: verification Hessian: PySCF's analytic one, or central finite differences of DFT gradients
    #: (6N+1 gradients)
    reoptimise_hessian: Literal["analytic", "finite-difference"] = "analytic"
    #: reoptimise: the both-way check looks at the key distances every this many relaxation steps (fewer DFT
    #: gradients than the GFN2-xTB check's 20; the criteria are those of paths.saddle)
    reoptimise_side_chunk_steps: int = Field(5, ge=1)
    #: PySCF integration grid level (0 coarse ... 9 fine)
    grid_level: int = Field(3, ge=0, le=9)
    #: SCF cycles at most and convergence of the energy (hartree)
    max_scf_cycles: int = Field(100, ge=1)
    scf_tolerance_hartree: float = Field(1e-9, gt=0)
    #: peak memory one DFT calculation may take (MB, 1e6 bytes); a calculation whose estimate (engines/dftmemory.py)
    #: is larger is not started and is recorded as failed (dft_memory_limit); PySCF gets 40 % of it as its target.
    #: None = 80 % of the memory available when the job's DFT starts, divided among the local worker processes.
    #: Changes no number, so it is left out of the job key (pipeline/document.py)
    memory_limit_MB: float | None = Field(None, gt=0)

    @model_validator(mode="before")
    @classmethod
    def _composite_fixes_its_parts(cls, data: Any) -> Any:
        """Return the input with a composite's own basis and dispersion filled in; refuse any other with it."""
        if not isinstance(data, dict):
            return data
        functional = _normalised(data.get("functional"))
        parts = COMPOSITE_PARTS.get(functional)
        if parts is None:
            basis = _normalised(data.get("basis"))
            owner = next((name for name, own in COMPOSITE_PARTS.items() if own["basis"] == basis), None)
            if owner is not None:
                raise ValueError(f"dft.basis {data.get('basis')!r} belongs to the composite level {owner}: write "
                                 f"dft.functional: {owner} (it fixes basis and dispersion), or choose a def2 basis")
            return data
        for key, fixed in parts.items():
            if key in data and _normalised(data[key]) != fixed:
                raise ValueError(f"dft.functional {functional} is a composite level with its own basis ({parts['basis']}) "
                                 f"and dispersion ({parts['dispersion']} with its own parameters); dft.{key} "
                                 f"{data[key]!r} cannot be combined with it: leave dft.{key} out (or write {fixed})")
        return {**data, "functional": functional, **parts}

    @field_validator("functional", mode="before")
    @classmethod
    def _functional_name(cls, value: Any) -> Any:
        return _normalised(value)

    @field_validator("basis", mode="before")
    @classmethod
    def _diffuse_needed(cls, value: Any) -> Any:
        if isinstance(value, str) and value.strip().lower() == "def2-svp":
            raise ValueError("def2-svp lacks the diffuse functions the anionic bases need: use def2-svpd (the "
                             "default), or def2-tzvp / def2-tzvpd")
        return value.strip().lower() if isinstance(value, str) else value
