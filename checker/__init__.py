"""studygap: checks whether a validation-study document reports what its readers need."""

__version__ = "0.1.0"
