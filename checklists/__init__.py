"""Built-in checklists (YAML), installed as the package ``checker.checklists``."""
