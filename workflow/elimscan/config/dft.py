"""The optional DFT tier: PySCF single points on the GFN2-xTB saddles of each job."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, field_validator

from elimscan.config.frozen import Frozen


class DftConfig(Frozen):
    """Optional DFT single points (PySCF) on the GFN2-xTB saddles of each job; off by default."""

    enabled: bool = False
    #: exchange-correlation functional (PySCF name)
    functional: Literal["b3lyp", "pbe0"] = "b3lyp"
    #: dispersion correction (pyscf-dispersion): D3 with Becke-Johnson damping, D4, or none
    dispersion: Literal["d3bj", "d4", "none"] = "d3bj"
    #: basis set: diffuse functions are needed for the anionic bases (def2-SVP without them gave the wrong
    #: anti/syn order in a scratch test); def2-TZVP is the check level
    basis: Literal["def2-svpd", "def2-tzvp", "def2-tzvpd"] = "def2-svpd"
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

    @field_validator("basis", mode="before")
    @classmethod
    def _diffuse_needed(cls, value: Any) -> Any:
        if isinstance(value, str) and value.strip().lower() == "def2-svp":
            raise ValueError("def2-svp lacks the diffuse functions the anionic bases need: use def2-svpd (the "
                             "default), or def2-tzvp / def2-tzvpd")
        return value.strip().lower() if isinstance(value, str) else value
