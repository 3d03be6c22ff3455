"""Static ground clearance of an underwing nacelle and the nacelle-diameter margin."""

import numpy as np
import openmdao.api as om

from bypassopt.components.validation import check_range, check_validity
from bypassopt.components.options import declare_num_nodes


class GroundClearanceComp(om.ExplicitComponent):
    r"""Ground clearance of a wing-mounted nacelle and its margins, as constraint outputs.

    .. math::
        h_{gc} &= h_{wing} - g - D_{nac} \\
        \Delta h &= h_{gc} - h_{min} \quad (\ge 0 \text{ feasible}) \\
        \Delta D &= D_{max} - D_{nac} \quad (\ge 0 \text{ feasible})

    where :math:`h_{wing}` is the height of the wing lower surface above the ground at the engine
    station (aircraft at rest at maximum mass), :math:`g` the gap from the nacelle top to the wing
    lower surface (negative when the nacelle top rises above it) and :math:`D_{nac}` the maximum
    nacelle diameter. This is the static form of the constraint
    :math:`h_{wing} - z_{pylon} - D_{nac} \ge c_{min}` (field reference section 10, common
    practice).

    The minimum clearance is an input: real minima come from the applicable airworthiness rules
    and the airframer's criteria (flat tyre, compressed oleo, roll angle with wing flex,
    nose-gear collapse, runway debris and water ingestion) and must be taken from them; a static
    0.45-0.6 m is common practice for conceptual design only.

    Valid range: wing_height >= 0, min_ground_clearance >= 0, max_nacelle_diameter > 0,
    nacelle_max_diameter > 0 (checked). Linear, so the partials are constants.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        ones = np.ones(nn)
        self.add_input("wing_height", val=3.15 * ones, units="m",
                       desc="Height of the wing lower surface above the ground at the engine station")
        self.add_input("nacelle_wing_gap", val=0.35 * ones, units="m",
                       desc="Gap from the nacelle top to the wing lower surface (negative: nacelle "
                            "top above the wing lower surface)")
        self.add_input("nacelle_max_diameter", val=2.4 * ones, units="m",
                       desc="Maximum nacelle diameter")
        self.add_input("min_ground_clearance", val=0.5 * ones, units="m",
                       desc="Required minimum static nacelle ground clearance")
        self.add_input("max_nacelle_diameter", val=3.0 * ones, units="m",
                       desc="Explicit upper limit on the maximum nacelle diameter")
        self.add_output("ground_clearance", val=ones, units="m",
                        desc="Static clearance between the nacelle bottom and the ground")
        self.add_output("clearance_margin", val=np.zeros(nn), units="m",
                        desc="Ground clearance minus the required minimum (>= 0 feasible)")
        self.add_output("diameter_margin", val=np.zeros(nn), units="m",
                        desc="Diameter limit minus the nacelle maximum diameter (>= 0 feasible)")

    def setup_partials(self):
        """Declare the constant elementwise partials."""
        ar = np.arange(self.options["num_nodes"])
        for of in ("ground_clearance", "clearance_margin"):
            self.declare_partials(of, "wing_height", rows=ar, cols=ar, val=1.0)
            self.declare_partials(of, "nacelle_wing_gap", rows=ar, cols=ar, val=-1.0)
            self.declare_partials(of, "nacelle_max_diameter", rows=ar, cols=ar, val=-1.0)
        self.declare_partials("clearance_margin", "min_ground_clearance", rows=ar, cols=ar, val=-1.0)
        self.declare_partials("diameter_margin", "max_nacelle_diameter", rows=ar, cols=ar, val=1.0)
        self.declare_partials("diameter_margin", "nacelle_max_diameter", rows=ar, cols=ar, val=-1.0)

    def compute(self, inputs, outputs):
        """Compute the clearance and the margins."""
        where = self.pathname
        check_range("wing_height", inputs["wing_height"], 0.0, 50.0, "m", where=where)
        check_range("nacelle_wing_gap", inputs["nacelle_wing_gap"], -10.0, 10.0, "m", where=where)
        # follows the coupled engine size; linear here, so only its validity is checked (converged state)
        check_validity("nacelle_max_diameter", inputs["nacelle_max_diameter"], 0.0, 20.0, "m",
                       lower_inclusive=False, where=where)
        check_range("min_ground_clearance", inputs["min_ground_clearance"], 0.0, 10.0, "m", where=where)
        check_range("max_nacelle_diameter", inputs["max_nacelle_diameter"], 0.0, 20.0, "m",
                    lower_inclusive=False, where=where)
        gc = inputs["wing_height"] - inputs["nacelle_wing_gap"] - inputs["nacelle_max_diameter"]
        outputs["ground_clearance"] = gc
        outputs["clearance_margin"] = gc - inputs["min_ground_clearance"]
        outputs["diameter_margin"] = inputs["max_nacelle_diameter"] - inputs["nacelle_max_diameter"]
