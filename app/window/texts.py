"""Longer texts the window shows (About box with the cautions)."""

from __future__ import annotations

APP_TITLE = "Rungwise"
"""The program's name in titles."""

ABOUT_HTML = """
<h3>Rungwise</h3>
<p>Compares resistor-network DACs — binary-weighted and R-2R ladders — solved exactly at every code
with switch on-resistance, reference resistance and load included.</p>
<p><b>Cautions.</b> The figures are estimates from ideal parts and the values you enter.</p>
<ul>
<li>Check every resistor's power dissipation against its rating, and the reference's and the
switches' (or port pins') current limits, in the parts' datasheets.</li>
<li>Networks driven from voltages beyond safe low-voltage levels need insulation, spacing and
protection that this program does not assess: follow local electrical codes and have the design
checked by a licensed professional.</li>
<li>Temperature drift, ageing, leakage and switch non-linearity are not modelled unless shown.</li>
</ul>
<p>Type values in engineering notation: <tt>4k7</tt>, <tt>10 kΩ</tt>, <tt>2.5 V</tt>,
<tt>100m</tt>, <tt>0.1 %</tt>; <tt>open</tt> for no load.</p>
<p>MIT licence.</p>
"""
"""About box text (rich text)."""
