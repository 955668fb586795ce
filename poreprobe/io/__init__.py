"""Reading and writing: structures (PDB, mmCIF, MDAnalysis formats), radius sets,
residue tables, JSON/CSV export with atomic writes. The lowest layer above the
shared helpers; it imports no other poreprobe subpackage.
"""
