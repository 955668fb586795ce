"""The invented demo channels, the peptide builder that makes them, and the demo run."""
