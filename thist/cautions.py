"""The cautions that go with every result: terminal, report and README say the same."""

from __future__ import annotations

#: One line for the terminal.
SHORT = (
    "CAUTION: preliminary estimate only - not a substitute for the analysis and checks the "
    "governing building code requires; defer to local codes and to the licensed engineer of "
    "record."
)

#: Status line of every report.
STATUS = "Preliminary estimate - not for construction"

#: Full cautions for the report, in order.
FULL: tuple[str, ...] = (
    "This is a preliminary estimate made with an idealised model: lumped masses joined by "
    "story springs on a fixed base, shaken in one horizontal direction.",
    "Results depend on the idealisation of the structure (masses, story stiffnesses, spring "
    "laws, damping) and on the selection and scaling of the ground-motion records.",
    "It is not a substitute for the analysis and design checks required by the governing "
    "building code. Defer to local codes and to the licensed engineer of record.",
    "Every input must be reviewed by a qualified engineer before any result is used.",
    "The software is provided without warranty of any kind.",
)

#: What the model leaves out, for the scope section.
NOT_INCLUDED = (
    "soil-structure interaction",
    "torsion and plan irregularity",
    "P-delta effects (unless modelled in the story springs)",
    "vertical ground motion",
    "foundation flexibility and uplift",
)

#: Added wherever inelastic results are shown.
INELASTIC = (
    "Inelastic results are sensitive to the story spring laws and their parameters "
    "(yield force, post-yield stiffness, hysteresis rules) and to the damping model "
    "with yielding springs; treat ductility and residual drift as indicative."
)

#: Added wherever fragility functions are shown.
FRAGILITY = (
    "Fragility functions depend on the record set (its number, selection and scaling), on "
    "the structural model and on the damage-state thresholds; with few records the fitted "
    "median and dispersion are uncertain. Use them as a preliminary estimate only."
)

#: Said wherever synthetic records are made or described.
SYNTHETIC = (
    "Synthetic motions are not a substitute for recorded motions selected for the site; "
    "use them for demonstrations and trial runs only."
)
