import numpy as np
import pandas as pd
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.checks import check_physical, check_samples


@pytest.mark.parametrize("values, message", [
    ({"mass_1": 30.0, "mass_2": 40.0}, "exceeds 'mass_1'"),
    ({"a_1": 1.2}, "between 0 and 1"),
    ({"theta_jn": np.array([0.1, 4.0])}, "between 0 and pi"),
    ({"luminosity_distance": float("nan")}, "not a finite number"),
])
def test_unphysical_values_are_one_sentence(values, message):
    with pytest.raises(MemoryInferError, match=message):
        check_physical(values, "the test")


def test_physical_values_pass_and_samples_need_their_columns():
    check_physical({"mass_1": 30.0, "mass_2": 29.0, "theta_jn": 3.0, "dec": -1.2}, "the test")
    frame = pd.DataFrame({"mass_1": [30.0], "phase": [1.0]})
    check_samples(frame, ["mass_1", "phase"], "samples")
    with pytest.raises(MemoryInferError, match="lack the column 'psi'"):
        check_samples(frame, ["mass_1", "psi"], "samples")


def test_non_finite_samples_named_by_column_and_row():
    import numpy as np
    import pandas as pd

    from memory_infer.inputs.checks import check_samples

    frame = pd.DataFrame({"mass_1": [30.0, 31.0, 32.0], "luminosity_distance": [400.0, np.inf, 410.0],
                          "phase": [0.1, np.nan, np.nan]})
    with pytest.raises(MemoryInferError) as caught:
        check_samples(frame, ["mass_1", "luminosity_distance", "phase"], "posterior samples in 's.dat'")
    assert str(caught.value) == ("posterior samples in 's.dat' hold an infinite value in column 'luminosity_distance' "
                                 "at row 2, as does the column 'phase'")
