"""Checks: finished pairs against tolerances, ready-made readers, deviations."""
