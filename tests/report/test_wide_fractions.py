"""A result too wide for a line is shown as 𝒩/𝒟 with 𝒩 and 𝒟 on lines of their own, each
written in the same order of terms as the result's one-line form (and as `derive` prints
it), not printed a second time in another order."""

from __future__ import annotations

from pathlib import Path

import symcirc
from symcirc.report.content import result_view
from symcirc.report.formulas import fraction_parts

STRAIN_BRIDGE = Path(__file__).parents[1] / "forms" / "strain_bridge.circuit"


def test_numerator_and_denominator_lines_follow_the_one_line_form():
    circuit = symcirc.load(STRAIN_BRIDGE)
    (result,) = circuit.derive("V(out)")
    one_line = result.latex()
    sign, numerator, denominator = fraction_parts(one_line)
    view = result_view(result)
    shown = [line for equation in view.canonical for line in equation.lines]
    assert shown[0].endswith("\\frac{\\mathcal{N}}{\\mathcal{D}}")
    body = " ".join(line.replace("&", "").replace("\\cr", "").replace("\\quad", "")
                    for line in shown[1:])
    squeeze = "".join
    for part in (numerator, denominator):
        assert squeeze(part.split()) in squeeze(body.split())
