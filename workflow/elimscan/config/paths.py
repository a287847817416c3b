"""The E2 (and SN2) paths of a job: complexes, relaxed paths, their starts, and saddle refinement and verification."""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from elimscan.config.frozen import Frozen

#: the counts that multiply the paths of a job (path points, base rotations, backbone conformers, orientations)
#: are each at most this
MAX_PATH_COUNT = 1000
#: the largest gradient budget of one path per atom of its complex (paths.gradient_budget_per_atom); null in the
#: config means no limit at all
MAX_GRADIENT_BUDGET_PER_ATOM = 10_000.0
#: the loosest force a complex's base rotations may be screened to (paths.complex_screen_fmax_eV_per_A, eV/Å): a
#: relaxation stopped above it has barely left its start, so its energy ranks the starts, not the complexes
MAX_COMPLEX_SCREEN_FMAX_eV_per_A = 1.0


class SaddleConfig(Frozen):
    """Saddle refinement and verification."""

    #: refine a first-order saddle with Sella from the relaxed-path maximum
    refine: bool = True
    #: Sella starts tried from the path before the fallbacks: the highest finished interior points, highest
    #: first (a flat, double-humped top can make Sella fail from one point and succeed from its neighbour)
    path_point_starts: int = Field(3, ge=1, le=10)
    #: start Sella from a one-sided finite-difference Hessian (3N+1 gradients) instead of its model Hessian
    exact_initial_hessian: bool = True
    max_steps: int = Field(300, ge=1)
    fmax_eV_per_A: float = Field(0.01, gt=0)
    #: finite-difference step of the verification Hessian (Å)
    hessian_step_A: float = Field(0.005, gt=0)
    #: the reaction mode must be imaginary beyond this (cm^-1) ...
    imaginary_min_cm1: float = Field(100.0, gt=0)
    #: ... and no other mode imaginary beyond this (cm^-1)
    other_imaginary_max_cm1: float = Field(50.0, gt=0)
    #: displacement along the imaginary mode before relaxing both ways (Å, whole-molecule norm)
    displacement_A: float = Field(0.3, gt=0)
    #: product side: C-alpha...X at least this (Å) and base-H at most product_base_h_max_A (Å)
    product_c_x_min_A: float = Field(3.0, gt=0)
    product_base_h_max_A: float = Field(1.1, gt=0)
    #: reactant side: base...H at least this (Å) and C-alpha-X at most reactant_c_x_max_A (Å)
    reactant_base_h_min_A: float = Field(1.3, gt=0)
    reactant_c_x_max_A: float = Field(2.4, gt=0)
    #: substitution: product side has Nu-C-alpha at most this (Å); reactant side at least the next (Å)
    substitution_bond_max_A: float = Field(1.7, gt=0)
    substitution_reactant_min_A: float = Field(2.5, gt=0)
    #: last fallback when Sella fails from the path maximum and from the base-H scan: a climbing-image NEB
    #: between the reactant complex and the freely relaxed path end, whose climbing image seeds Sella again
    neb_fallback: bool = True
    #: NEB images including the two end points (at least 15: fewer let the climbing image sit on a false maximum)
    neb_images: int = Field(15, ge=15)
    #: NEB convergence (eV/Å, largest NEB force) and step limit (FIRE)
    neb_fmax_eV_per_A: float = Field(0.05, gt=0)
    neb_max_steps: int = Field(300, ge=1)


class PathConfig(Frozen):
    """Base-substrate complexes and the relaxed E2 path for each beta-H class."""

    #: compute anti and/or syn paths
    approaches: tuple[Literal["anti", "syn"], ...] = ("anti", "syn")
    #: basic atom placed on the extension of the C-beta-H bond at this H...base distance (Å)
    complex_distance_A: float = Field(2.0, gt=0.8)
    #: rotations of the base about that axis tried for each complex
    base_rotations: int = Field(3, ge=1, le=MAX_PATH_COUNT)
    #: a placed base must keep every atom at least this fraction of the sum of van der Waals radii from every
    #: substrate atom (its basic atom's contact with the H or C-alpha it is placed at left out); where the base's
    #: own orientation does not, the base is turned about its basic atom by the smallest turn that does (the
    #: largest clearance when none does). Null: the base as placed, clashes and all (before 2026-12-04, when a
    #: three-ethanol cluster could land on the substrate and its relaxation traded or broke bonds). 0.7 is common
    #: practice for a steric clash, not fitted
    complex_clearance_vdw_fraction: float | None = Field(0.7, gt=0, le=1.5)
    #: a complex whose relaxation changed the substrate's covalent bonds or bonded it to the base (covalent radii x
    #: 1.2, metals left out) is not a reactant complex: that rotation is dropped as failed (complex_bonds_changed)
    complex_bond_check: bool = True
    #: ... and one whose relaxation changed the base's own covalent bonds (a hydrogen handed between the base's O, N
    #: or S atoms aside: the same cluster): also dropped as failed (complex_bonds_changed). Seen 2026-12-05 on the
    #: three-ethanol cluster: 2 of 43 saved complexes (syn paths of 2-pentyldimethylsulfonium and 4-chlorophenethyl
    #: bromide) held two ethanols joined and a lone hydrogen, 21-23 kcal/mol below the other complexes of their job.
    #: false: as before 2026-12-05
    complex_base_bond_check: bool = True
    #: relax every base rotation of a complex first with BFGS (the same held coordinates) only to this largest force
    #: (eV/Å), rank the rotations on those energies, and relax only the chosen one (the lowest, or the rank an
    #: orientation path asks for) on with method.optimizer to its force limit (null: every rotation fully with
    #: method.optimizer). bench_paths at 0.05: the complexes' wall time 50-70 % lower (Sella's Python step costs
    #: about three cluster gradients), but another near-equal rotation is often kept: barriers moved by up to 0.31
    #: kcal/mol with the bare anion and 2.5 kcal/mol on the three-ethanol cluster's syn paths, hence off
    complex_screen_fmax_eV_per_A: float | None = Field(None, gt=0, le=MAX_COMPLEX_SCREEN_FMAX_eV_per_A)
    #: ... and also relax on every other rotation whose screened energy lies within this of the lowest screened one
    #: (kcal/mol), keeping the lowest after relaxing on (0: only the chosen rotation); rotations often lie within
    #: 0.2 kcal/mol of each other, so a loose ranking picks among near-equals
    complex_screen_window_kcal_mol: float = Field(0.0, ge=0)
    #: optimiser of the complex relaxations (every base rotation of an E2 complex, the relax-on after a screen, and
    #: the SN2 complex), with method.optimizer's force limit, step limit and rigid rotation: null = method.optimizer;
    #: 'bfgs' = ASE BFGS with FixInternals in Cartesians; 'sella' = Sella in internal coordinates; 'sella-cartesian'
    #: = Sella in Cartesians. bench_paths (one run each, against null): the complexes' steps run 76-90 % inside the
    #: library (17-31 % with Sella in internals) but take 2.2-3.2 x the gradients, so their cost in gradient times
    #: moved -25 to +2 % and the job's -7 to +6 %; bare anion: syn barriers +0.50/-0.30 (bfgs) and +0.31/-0.20
    #: (sella-cartesian) kcal/mol; three-ethanol cluster: verified saddles 6 -> 7 (a path that never rose now
    #: rises) and the SN2 barrier +1.37 kcal/mol (sella-cartesian), hence null (docs/method.md, Complexes)
    complex_optimizer: Literal["bfgs", "sella", "sella-cartesian"] | None = None
    #: combined coordinate d(Cb-H) - d(B-H) + d(Ca-X) is driven up in steps of this (Å) ...
    step_A: float = Field(0.15, gt=0)
    #: ... for this many points after the complex
    points: int = Field(20, ge=2, le=MAX_PATH_COUNT)
    #: driven points are first relaxed only to this largest force (eV/Å; null: every point to optimizer.fmax_eV_per_A
    #: at once); then the highest are relaxed on to optimizer.fmax_eV_per_A, each from its own loose geometry and
    #: BFGS Hessian, highest first, until the next lies below the highest tightened one (relaxing on only lowers a
    #: point), so the top is found as on an all-tight path. 0.03: the benchmark job's driven-path gradients
    #: 7,152 -> 3,330 with stride 2, every barrier within 0.06 kcal/mol and every saddle verified (bench_paths)
    loose_fmax_eV_per_A: float | None = Field(0.03, gt=0)
    #: ... only points within this of the highest loosely relaxed point are tightened (kcal/mol; loose points of
    #: the benchmark job lay 0.1-1.7 kcal/mol above their tight relaxations)
    top_window_kcal_mol: float = Field(2.0, ge=0)
    #: past the top, once a driven point lies more than top_window_kcal_mol below the highest so far, the path goes
    #: on this many steps at a time (its last point stays at points x step_A; 1: every step)
    after_top_stride: int = Field(2, ge=1, le=MAX_PATH_COUNT)
    #: start each driven point's first relaxation from the BFGS Hessian the previous point's first relaxation ended
    #: with (false: from BFGS's fresh guess Hessian at every point; the first point always starts fresh). bench_paths:
    #: driven-path gradients 3,330 -> 2,210, median E2 path 808 -> 670, 7/7 saddles verified, barriers within 0.05
    #: kcal/mol; the path top itself may move (a flat base rotation), the verified saddle did not. Measured again
    #: 2026-12-04 (one run each, busy machine): bare 808 -> 638 per E2 path, 7/7 verified, barriers within 0.061;
    #: three-ethanol cluster, three anti paths: 1,242 -> 1,068, 3/3 verified, within 0.024. Tightening the top from a
    #: fresh Hessian instead did not keep the top in place (it moves in the loose pass: 668); a looser first pass
    #: (0.05 eV/Å: 890) and two steps at a time while climbing (838; 744 with the carried Hessian) cost more. Tried
    #: as the default on the benchmark's fast subset (frozen three-ethanol model, 3 seeds, 15 jobs, 2026-12-04, with
    #: optimizer.internal_rebuild_limit 5; records of commit 1906f10 in validation/records): 17 % fewer gradients, the
    #: same verified-saddle counts and complexes (one apart, the limit's), ΔE‡ median change 0.002 kcal/mol, but 3
    #: of 67 moved by more than 0.3 (+1.44, +1.07, +0.56), all up: the carried Hessian converges the path top so
    #: well that Sella accepts it as the saddle with no step (saddle = path top to 0.000 kcal/mol), where from the
    #: less converged top of a fresh Hessian it had walked on to a lower saddle of the same hydrogen (7.76 against
    #: 9.20 kcal/mol). Speed may not move a barrier by more than 0.3 kcal/mol (issue 19), so it stays off
    carry_hessian: bool = False
    #: syn paths hold H-C-C-X at this dihedral (degrees)
    syn_dihedral_deg: float = Field(0.0, ge=-30, le=30)
    #: also compute backside substitution (SN2) at C-alpha for every job
    substitution: bool = True
    #: start each E2 approach from up to this many distinct backbone conformers (lowest first); the lowest
    #: path top is used and the spread over them is reported as an uncertainty
    backbone_conformers: int = Field(1, ge=1, le=MAX_PATH_COUNT)
    #: ... only conformers within this window above the lowest periplanar one (kcal/mol) ...
    backbone_window_kcal_mol: float = Field(3.0, gt=0)
    #: ... and differing from each other by more than this heavy-atom RMSD (Å)
    backbone_distinct_rmsd_A: float = Field(0.25, gt=0)
    #: drive a whole path from each of this many lowest base rotations of the complex (at most base_rotations)
    orientation_paths: int = Field(1, ge=1, le=MAX_PATH_COUNT)
    #: how the paths of one approach from several starts (backbone conformers x orientations) make one
    #: barrier: the lowest top, or a Boltzmann sum over distinct tops at method.temperature_K
    combine: Literal["lowest", "boltzmann"] = "lowest"
    #: nucleophile placed behind C-alpha at this distance for the substitution complex (Å)
    substitution_distance_A: float = Field(3.0, gt=1.5)
    #: gradients one path (complex, driven path, saddle search, checks and fallbacks) may spend, per atom of the
    #: complex; a path that would spend more is stopped and reported as an unfinished estimate that is no barrier
    #: (null: no limit). The default 200 was 3.5 x the benchmark job's median path (1,311 gradients at 23 atoms)
    #: and 3.6 x the demo's before the loose first pass (median 808 since, so 5.7 x): ordinary paths and their
    #: first fallbacks fit, a runaway stops
    gradient_budget_per_atom: float | None = Field(200.0, gt=0, le=MAX_GRADIENT_BUDGET_PER_ATOM)
    saddle: SaddleConfig = SaddleConfig()
