"""Imports the modules that register further case sections, results and worker actions.

Lens designs, the reading zone and its remedies (docs/case-format.md, "Lens designs
and the reading zone"); verification, ready-made readers, deviations through
spectacles and batch runs (docs/case-format.md, "Verification" to "Batch files").
The command-line commands are registered apart, in pycore.command_extensions, so
the browser worker does not load them.
"""

from . import (  # noqa: F401  (imported to register)
    documents,
    reading_options,
    reading_point,
    reading_zone,
    remedies,
    remedy_commands,
    verification_section,
    worker_actions,
)
