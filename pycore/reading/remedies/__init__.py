"""Remedies for a vertical imbalance at the reading level, each with its finished case."""
