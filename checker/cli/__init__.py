"""The command layer: ``main`` parses the command line and runs ``check``, ``outline`` and ``checklists``; one
module per other command (screen, audit, compare, evaluate). Options and wiring only; the work is in the stages."""
