"""Imports the modules that register further case sections, results and commands."""
# Lens designs, the reading zone and its remedies (docs/case-format.md, "Lens designs and
# the reading zone"); verification, ready-made readers, deviations through spectacles and
# batch runs (docs/case-format.md, "Verification" to "Batch files").
from . import (  # noqa: F401  (imported to register)
    batch_cli,
    deviation_cli,
    readers_cli,
    reading_options,
    reading_point,
    reading_zone,
    remedies,
    remedy_commands,
    verification_section,
    verify_cli,
    worker_actions,
)
