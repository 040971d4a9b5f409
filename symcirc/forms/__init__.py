"""Design-oriented forms and derivation steps.

`annotate(circuit, quantity, results, options)` gives each result the derivation an
engineer would write (series/parallel and star–delta reduction, dividers, superposition,
or the nodal equations solved by Cramer's rule) and a design form (`R1∥R2 + R3∥R4`, the
standard transfer-function forms with K, ω0, Q), each proved equal to the canonical result.
`approximate(circuit, result, assumption)` handles `big >> small`; `steps_text(result)`
prints the steps for `--format text`. `finish(circuit, quantity, results, options)` gives
results as every command shows them (the pipeline calls it).
"""

from __future__ import annotations

from .annotate import annotate, approximate, steps_text
from .form import Form
from .parallel import Parallel
from .shown import finish

__all__ = ["Form", "Parallel", "annotate", "approximate", "finish", "steps_text"]
