"""GFN2-xTB through tblite: conformers, single points, optimisations, species energies.

tblite is an optional dependency (extra ``xtb``); it is imported only where a calculation runs.
GFN2-xTB: C. Bannwarth, S. Ehlert, S. Grimme, J. Chem. Theory Comput. 2019, 15, 1652.
ALPB solvation: S. Ehlert, M. Stahn, S. Spicher, S. Grimme, J. Chem. Theory Comput. 2021, 17, 4250.
"""
