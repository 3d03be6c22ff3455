"""Duct: adiabatic flow with a total-pressure loss between two stations."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_gas, declare_num_nodes

PRESSURE_LOSS_MAX = 0.2
"""Largest accepted duct total-pressure loss fraction, -."""


class DuctComp(om.ExplicitComponent):
    r"""Adiabatic duct with a total-pressure loss (bypass duct 13 -> 17, core exhaust duct 5 -> 7, ...).

    .. math::

        T_{t,out} = T_{t,in}, \qquad p_{t,out} = p_{t,in}\,(1 - \Delta p/p)

    No work and no heat cross the duct walls, so the total enthalpy, and with an unchanged composition the
    total temperature, is conserved (steady-flow energy equation); friction and mixing losses appear as the
    total-pressure loss :math:`\Delta p/p` (``{name}_pressure_loss``). Typical losses (common practice,
    field-reference 3.3): bypass duct 1-2 %, inter-compressor duct 1-2 %, inter-turbine duct 0.5-1 %, core
    exhaust duct 0.5-1 %; default 1.5 %. The fuel-air ratio is unchanged and is read by the downstream
    element (the nozzle) directly, so the duct carries none.

    Variable names come from the options: ``station_in='13'``, ``station_out='17'``, ``name='bypass_duct'``
    give inputs ``Tt13``, ``Pt13``, ``bypass_duct_pressure_loss`` and outputs ``Tt17``, ``Pt17``.

    Valid range: ``{name}_pressure_loss`` 0 to 0.2, entry temperature inside the gas model's range, entry pressure > 0.
    Outside it, or NaN, ``compute`` raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("station_in", types=str, default="13",
                             desc="Station number of the duct entry (variables Tt<n>, Pt<n>).")
        self.options.declare("station_out", types=str, default="17",
                             desc="Station number of the duct exit (variables Tt<n>, Pt<n>).")
        self.options.declare("name", types=str, default="bypass_duct",
                             desc="Prefix of the duct's loss input <name>_pressure_loss, e.g. 'bypass_duct'.")

    def _names(self):
        """Station- and name-derived variable names."""
        si, so, name = (self.options[k] for k in ("station_in", "station_out", "name"))
        return f"Tt{si}", f"Pt{si}", f"Tt{so}", f"Pt{so}", f"{name}_pressure_loss"

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        T_in, P_in, T_out, P_out, loss = self._names()
        name = self.options["name"]
        self.add_input(T_in, val=300.0 * np.ones(nn), units="K", desc=f"{name} entry total temperature.")
        self.add_input(P_in, val=1.5e5 * np.ones(nn), units="Pa", desc=f"{name} entry total pressure.")
        self.add_input(loss, val=0.015 * np.ones(nn), units=None,
                       desc=f"{name} total-pressure loss ({P_in} - {P_out})/{P_in} (0 to 0.2).")
        self.add_output(T_out, val=300.0 * np.ones(nn), units="K",
                        desc=f"{name} exit total temperature (equal to {T_in}: adiabatic duct).")
        self.add_output(P_out, val=1.5e5 * np.ones(nn), units="Pa",
                        desc=f"{name} exit total pressure, {P_in}*(1 - {loss}).")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        T_in, P_in, T_out, P_out, loss = self._names()
        self.declare_partials(T_out, T_in, rows=ar, cols=ar, val=1.0)
        self.declare_partials(P_out, P_in, rows=ar, cols=ar)
        self.declare_partials(P_out, loss, rows=ar, cols=ar)

    def compute(self, inputs, outputs):
        """Evaluate the duct exit state at every node."""
        gas = self.options["gas"]
        T_in, P_in, T_out, P_out, loss = self._names()
        check_range(T_in, inputs[T_in], gas.T_MIN, gas.T_MAX, "K", where=self.pathname)
        check_range(P_in, inputs[P_in], 0.0, np.inf, "Pa", lower_inclusive=False, where=self.pathname)
        check_range(loss, inputs[loss], **range_kwargs(loss, 0.0, PRESSURE_LOSS_MAX), where=self.pathname)
        outputs[T_out] = inputs[T_in]
        outputs[P_out] = inputs[P_in] * (1.0 - inputs[loss])

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        T_in, P_in, T_out, P_out, loss = self._names()
        partials[P_out, P_in] = 1.0 - inputs[loss]
        partials[P_out, loss] = -inputs[P_in]
