"""The core against an independent numpy reference (tests/reference.py) on random
prescriptions, prescribed prisms and points of gaze, through the full evaluate path."""

from __future__ import annotations

import numpy as np
import pytest
from reference import lens_prism

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate


def random_eye(rng: np.random.Generator) -> dict[str, object]:
    return {
        "sphere": float(rng.uniform(-20, 20)),
        "cylinder": float(rng.uniform(-6, 6)),
        "axis": float(rng.uniform(0, 180)),
        "prism": {"base_in": float(rng.uniform(-5, 5)), "base_up": float(rng.uniform(-5, 5))},
    }


def random_point(rng: np.random.Generator) -> dict[str, float]:
    return {"in_mm": float(rng.uniform(-25, 25)), "up_mm": float(rng.uniform(-25, 25))}


@pytest.mark.parametrize("seed", range(20))
def test_evaluate_matches_numpy_reference(seed: int) -> None:
    rng = np.random.default_rng(seed)
    case = {"right": random_eye(rng), "left": random_eye(rng),
            "points": [{"name": f"p{i}", "right": random_point(rng), "left": random_point(rng)}
                       for i in range(25)]}
    result = evaluate(read_case(case))
    for point, out in zip(case["points"], result["points"], strict=True):
        expected = {}
        for eye in ("right", "left"):
            rx, where = case[eye], point[eye]
            expected[eye] = lens_prism(rx["sphere"], rx["cylinder"], rx["axis"], eye,
                                       where["in_mm"], where["up_mm"],
                                       rx["prism"]["base_in"], rx["prism"]["base_up"])
            assert out[eye]["base_in"] == pytest.approx(expected[eye][0], abs=1e-9)
            assert out[eye]["base_up"] == pytest.approx(expected[eye][1], abs=1e-9)
        assert out["net"]["horizontal_base_in"] == pytest.approx(
            expected["right"][0] + expected["left"][0], abs=1e-9)
        assert out["net"]["vertical_base_up_right"] == pytest.approx(
            expected["right"][1] - expected["left"][1], abs=1e-9)


def test_power_matrix_matches_reference_on_many_lenses() -> None:
    from reference import power_matrix

    from pycore.optics.power import Prescription

    rng = np.random.default_rng(2026)
    for _ in range(2000):
        s, c, a = rng.uniform(-20, 20), rng.uniform(-8, 8), rng.uniform(0, 180)
        f = Prescription(float(s), float(c), float(a)).power_matrix
        ref = power_matrix(s, c, a)
        assert np.allclose([[f.xx, f.xy], [f.xy, f.yy]], ref, atol=1e-12)
        # Eigenvalues are the principal powers S and S + C.
        assert np.allclose(sorted(np.linalg.eigvalsh(ref)), sorted([s, s + c]), atol=1e-9)
