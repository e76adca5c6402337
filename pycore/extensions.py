"""Imports the modules that register further case sections, results and commands."""
