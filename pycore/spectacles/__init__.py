"""The spectacles as fitted: lens designs, segments, fitting, frame, decentration, gaze."""
