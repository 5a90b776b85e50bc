"""The ground motion a case analyses: the record as read → processed → scaled.

Processing steps run in the order the case lists them (:mod:`thist.processing`);
scaling to the user's target (:mod:`thist.scaling`) needs the structure's first
period, so this stage runs after the modal analysis. The intensity measures and
the response spectrum of the analysed record are computed here once, for the
results and the report.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np

from thist.case import RecordSpec
from thist.intensity import IntensityMeasures, intensity_measures
from thist.processing import ProcessingStep, apply_steps
from thist.record import Record
from thist.scaling import ScalingResult, scale_record
from thist.spectrum import Spectrum, response_spectrum

#: Damping ratio of the record's spectrum in results and report (common practice: 5 %).
SPECTRUM_DAMPING = 0.05


@dataclass(frozen=True)
class GroundMotion:
    """The record a case analyses, and what was done to it.

    Attributes
    ----------
    raw : Record
        The record file as read (with its unit and scale factor applied).
    record : Record
        After processing and scaling: the one the analysis samples.
    processing : tuple of ProcessingStep
        Each step in order, with parameters and before/after figures.
    scaling : ScalingResult or None
        The scaling to the user's target, if the case asks for it.
    intensity : IntensityMeasures
        Of the analysed record (computed when first asked for).
    spectrum : Spectrum
        5 %-damped response spectrum of the analysed record (computed when first
        asked for: studies that only need peaks never pay for it).
    """

    raw: Record
    record: Record
    processing: tuple[ProcessingStep, ...]
    scaling: ScalingResult | None

    @cached_property
    def intensity(self) -> IntensityMeasures:
        """Intensity measures and durations of the analysed record."""
        return intensity_measures(self.record.ag, self.record.dt)

    @cached_property
    def spectrum(self) -> Spectrum:
        """5 %-damped response spectrum of the analysed record."""
        return response_spectrum(self.record.ag, self.record.dt, damping=SPECTRUM_DAMPING)


def prepare_motion(spec: RecordSpec, t1: float) -> GroundMotion:
    """Process and scale a case's record.

    Parameters
    ----------
    spec : RecordSpec
        The record, its processing steps and its scaling rule.
    t1 : float
        First-mode period of the structure, s (for scaling rules relative to T₁).

    Returns
    -------
    GroundMotion
    """
    raw = spec.record
    ag, dt, log = (
        apply_steps(raw.ag, raw.dt, spec.processing) if spec.processing else (raw.ag, raw.dt, ())
    )
    scaling = None
    if spec.scaling is not None:
        period, period_range = spec.scaling.periods_for(t1)
        ag, scaling = scale_record(
            ag,
            dt,
            spec.scaling.target,
            period=period,
            period_range=period_range,
            bounds=spec.scaling.bounds,
            damping=spec.scaling.damping,
        )
    record = replace(raw, ag=np.asarray(ag, dtype=float), dt=float(dt))
    return GroundMotion(raw, record, tuple(log), scaling)
