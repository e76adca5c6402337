"""The command-line commands, one module each (listed in pycore.interfaces.cli)."""
