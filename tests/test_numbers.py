"""The one rounding rule (GUM, JCGM 100:2008, 7.2.6: the uncertainty to two significant figures,
the value to the same decimal place), on a table of cases including those reproduced in the
issue tracker."""

import pytest

from benchwarden.render.numbers import fmt_uncertain, fmt_value


@pytest.mark.parametrize("x, u, unit, expected", [
    (-98.3, 229.4, "sccm", "-100 ± 230 sccm"),          # was "-98.3 ± 2.3e+02 sccm"
    (8591.0, 5512.0, "g/min", "8600 ± 5500 g/min"),     # was "8.59e+03 ± 5.5e+03 g/min"
    (-4.195, 191.457, "g", "0 ± 190 g"),                # was "-4.195 ± 191.457 g"
    (-3.982, 229.0, "sccm", "0 ± 230 sccm"),            # was "-3.98 ± 2.3e+02" beside "-3.982 ± 229"
    (7.4158, 46.503, "sccm", "7 ± 47 sccm"),
    (0.3214, 0.0123, "", "0.321 ± 0.012"),
    (12.346, 0.99, "kg", "12.35 ± 0.99 kg"),
    (150.0, 0.0, "bar", "150 bar"),
])
def test_rounding_table(x, u, unit, expected):
    assert fmt_uncertain(x, u, unit) == expected


@pytest.mark.parametrize("x, expected", [(8591.2, "8590"), (0.004196, "0.00420"), (12.0, "12.0"),
                                         (123456.0, "123000"), (0.5, "0.500")])
def test_plain_figures_without_scientific_notation(x, expected):
    assert fmt_value(x) == expected
    assert "e" not in fmt_value(x)
