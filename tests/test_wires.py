"""Wire sizes and resistance against ASTM B258 and IEC 60028."""
import numpy as np
import pytest

from fluxfront.models import winding

# ASTM B258 nominal diameters in inches as the standard's table gives them, rounded to four
# decimals (values from memory of that table); tolerance: half the last printed digit.
ASTM_B258_INCH = [(10, 0.1019), (14, 0.0641), (18, 0.0403), (20, 0.0320), (24, 0.0201), (30, 0.0100),
                  (36, 0.0050), (40, 0.0031)]


@pytest.mark.parametrize("awg,d_inch", ASTM_B258_INCH)
def test_awg_diameter_matches_astm_b258(awg, d_inch):
    assert winding.awg_diameter(awg) / 25.4e-3 == pytest.approx(d_inch, abs=0.5e-4)


def test_awg18_resistance_per_metre():
    # shared/reference/methods.md section 3: AWG 18 -> 1.0237 mm, 20.948 mOhm/m at 20 C
    # (IEC 60028 resistivity 1/58 ohm mm2/m); tolerance: the last printed digit.
    d = winding.awg_diameter(18)
    assert d * 1e3 == pytest.approx(1.0237, abs=5e-5)
    assert winding.COPPER_RESISTIVITY_20C / (np.pi * d**2 / 4) * 1e3 == pytest.approx(20.948, abs=5e-4)


def test_copper_resistivity_temperature_coefficient():
    # IEC 60028: rho20 = 1/58 ohm mm2/m, alpha20 = 0.00393 /K -> at 100 C the factor 1.3144.
    assert winding.copper_resistivity(20.0) == pytest.approx(1 / 58 * 1e-6, rel=1e-4)
    assert winding.copper_resistivity(100.0) / winding.copper_resistivity(20.0) == pytest.approx(1.3144, rel=1e-12)


def test_catalog_wires_have_insulation_and_litz_is_bigger_than_its_copper(catalog):
    w18 = catalog.wires["awg18-g2"]
    w18g1 = catalog.wires["awg18-g1"]
    # grade-2 build on AWG 24-14 adds about 0.05-0.09 mm (methods.md, memory)
    assert 0.05e-3 <= w18.outer_diameter - w18.strand_diameter <= 0.09e-3
    assert w18g1.outer_diameter < w18.outer_diameter
    litz = catalog.wires["litz105x38awg"]
    copper_circle = np.sqrt(4 * litz.copper_area / np.pi)
    assert litz.outer_diameter > copper_circle
    assert litz.strands == 105
