"""Property tests: monotonicity and physical bounds over the validity ranges."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

import matprops

temperatures = st.floats(min_value=80, max_value=495, allow_nan=False)
pairs = st.tuples(temperatures, temperatures).filter(lambda p: abs(p[0] - p[1]) > 1e-6)


@settings(deadline=None, max_examples=60)
@given(pairs, st.sampled_from(matprops.models("band_gap")))
def test_gap_shrinks_with_temperature(pair, model_id):
    low, high = sorted(pair)
    if model_id == "bludau-1974" and high > 300:
        return
    si = matprops.silicon(models={"band_gap": model_id})
    gaps = si.band_gap(np.array([low, high])).m_as("eV")
    assert gaps[1] < gaps[0]
    assert np.all((gaps > 1.0) & (gaps < 1.171))


@settings(deadline=None, max_examples=60)
@given(pairs)
def test_intrinsic_density_rises_and_stays_below_states(pair):
    si = matprops.silicon()
    low, high = sorted(pair)
    n = si.intrinsic_density(np.array([low, high])).m_as("cm^-3")
    assert n[1] > n[0] > 0
    nc, nv = si.densities_of_states(high)
    assert n[1] < np.sqrt((nc * nv).m_as("cm^-6"))


@settings(deadline=None, max_examples=40)
@given(st.floats(min_value=125, max_value=1495), st.floats(min_value=0.5, max_value=5))
def test_lattice_expands(t, dt):
    # Okada & Tokumaru 1984 (J. Appl. Phys. 56, 314; abstract): the expansion coefficient
    # 3.725e-6 [1 - exp(-5.88e-3 (T - 124))] + 5.548e-10 T is positive above 124 K, so the
    # lattice constant must grow there (below about 120 K silicon contracts on heating,
    # which is why the formula starts at 120 K)
    si = matprops.silicon()
    a = si.lattice_constant(np.array([t, t + dt])).m_as("nm")
    assert a[1] > a[0]
