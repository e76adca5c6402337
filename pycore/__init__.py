"""Prism Desk calculation core: spectacle prism by Prentice's rule.

Standard library only, so that it runs unchanged in the browser (Pyodide).
Lengths are millimetres at the edges and centimetres only inside Prentice's
rule; powers in dioptres; prism in prism dioptres.
"""

__version__ = "0.1.0"
