"""Figures of a run (matplotlib, no file I/O): one module a figure kind, over shared helpers.

Every figure is a ``matplotlib.figure.Figure`` built directly (no pyplot, no global figure state) and
turned into bytes or text by ``figures.figure_png`` / ``figures.figure_svg``; the caller writes them.
Angles in degrees on (-180, 180], relative energies in kcal/mol, lengths in Å. Each module imports only
those above it in this list:

- ``figures``: shared helpers: palette, number text, SVG and PNG output, element ids
- ``newman``: Newman projections down the Cβ→Cα bond, from a scan frame
- ``scans``: the H-C-C-X dihedral scans of a job
- ``paths``: the relaxed E2 paths with their saddles; whether a job has barriers
- ``profile``: the energy profile (reactants, complex, saddle, product side) of the E2 and SN2 paths
- ``character``: the saddle-character map
- ``products``: the rule's call on each alkene beside the computed shares
- ``series``: Hammett plots of substituent series
- ``jobplots``: the one table of a job's plot kinds and when each is drawn and shown; plot names; a job's figures
"""
