"""Interface-only promotion for the engine groups that a user embeds in a larger (aircraft) model.

A group built on ``InterfaceGroup`` promotes, by default, only its interface: every input it does not compute
itself (what a user drives) and its documented outputs (what a user reads), each under a name prefix
(``'engine:'`` by default), so that a model that promotes ``*`` from it keeps its own ``altitude``, ``thrust`` and
``fuel_flow``. Every other variable stays reachable by its path under the subsystem ``model``
(``engine.model.Tt3``, ``engine.model.cycle.hpc.Tt3``). The options:

- ``expose='interface'`` (default) or ``'all'`` (every variable, as the plain group has them);
- ``name_prefix`` (default ``'engine:'``): the prefix of every promoted name; ``''`` keeps the plain names.

With ``expose='all'`` and ``name_prefix=''`` the group is built in place (no ``model`` subsystem): that is the
form the project's own problems use, and the one whose variables are described in each group's docstring.
"""

from abc import ABCMeta, abstractmethod

import openmdao.api as om

#: Choices of the ``expose`` option.
EXPOSE_CHOICES = ("interface", "all")
#: Default prefix of the promoted names.
DEFAULT_PREFIX = "engine:"
#: Subsystem that holds the full model when the interface is promoted.
MODEL_NAME = "model"
#: Options that build a group in place with every variable under its plain name: ``Group(**ALL_PLAIN)``.
ALL_PLAIN = {"expose": "all", "name_prefix": ""}


class InterfaceGroup(om.Group, metaclass=ABCMeta):
    """Abstract base of a group that promotes its interface only (module docstring); subclasses build in ``build``.

    Subclasses declare their own options in ``initialize`` (calling ``super().initialize()``), build their
    subsystems in ``build`` (instead of ``setup``), name their documented outputs in ``interface_outputs`` and put
    their ``guess_nonlinear`` logic in ``guess`` (it runs only where the group is built in place).
    """

    def initialize(self):
        """Declare the promotion options."""
        self.options.declare("expose", default="interface", values=EXPOSE_CHOICES,
                             desc="'interface': promote the inputs a user drives and the documented outputs only "
                                  "(the rest by path under 'model'); 'all': promote every variable")
        self.options.declare("name_prefix", types=str, default=DEFAULT_PREFIX,
                             desc="prefix of every promoted name ('' keeps the plain names)")

    @property
    def builds_in_place(self):
        """True when every variable is promoted under its plain name (no ``model`` subsystem)."""
        return self.options["expose"] == "all" and not self.options["name_prefix"]

    @abstractmethod
    def build(self):
        """Add the subsystems, solvers and input defaults (subclasses)."""

    @abstractmethod
    def interface_outputs(self):
        """Return the names of the documented outputs a user reads (subclasses; plain names)."""

    def guess(self, inputs, outputs, residuals):
        """Set the initial guess of the coupled unknowns (subclasses; called only where the group is built in place)."""

    def setup(self):
        """Build in place, or wrap a full copy of this group (every variable, plain names) as ``model``."""
        if self.builds_in_place:
            self.build()
            return
        base = set(om.Group().options)
        own = {k: self.options[k] for k in self.options if k not in base}
        own.update(expose="all", name_prefix="")
        self.add_subsystem(MODEL_NAME, type(self)(**own))

    def configure(self):
        """Promote the interface (or every variable) of the wrapped model under the name prefix."""
        if self.builds_in_place:
            return
        model = getattr(self, MODEL_NAME)
        inputs = _promoted(model, "input")
        outputs = _promoted(model, "output")
        if self.options["expose"] == "all":
            names = inputs | outputs
        else:
            documented = set(self.interface_outputs())
            missing = documented - outputs
            if missing:
                raise RuntimeError(f"{self.msginfo}: documented interface outputs {sorted(missing)} are not "
                                   "outputs of the model")
            names = (inputs - outputs) | documented
        prefix = self.options["name_prefix"]
        self.promotes(MODEL_NAME, any=sorted((name, prefix + name) for name in names))

    def guess_nonlinear(self, inputs, outputs, residuals):
        """Run ``guess`` where the group is built in place (the wrapper has no unknowns of its own)."""
        if self.builds_in_place:
            self.guess(inputs, outputs, residuals)


def _promoted(group, iotype):
    """Plain promoted names of a group's inputs or outputs (those it leaves unpromoted, with a dot, excluded)."""
    meta = group.get_io_metadata(iotypes=iotype, metadata_keys=["units"], get_remote=True)
    return {m["prom_name"] for m in meta.values() if "." not in m["prom_name"]}
