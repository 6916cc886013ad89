"""Grain models from first principles: materials, size distributions, Mie theory.

This package is the physics and takes objects only: optical constants
(:class:`OpticalConstants`) combined into a :class:`Material`, size
distributions per H nucleon, :class:`Component` s and the :class:`GrainModel`
whose cross sections follow from Mie theory, PAHs, and builders of the
published models from tables already read (:mod:`redcorr.grains.published`).
Radiation fields (:mod:`redcorr.grains.fields`) heat the grains; their
equilibrium temperatures, far-infrared emission, τ_abs/A_V and modified
blackbody fits are in :mod:`redcorr.grains.emission`.

Names and files are resolved at the edge, in :mod:`redcorr.io.grains`: the
packaged materials and named models (``get_material``, ``get_grain_model``,
``list_grain_models``), models described in TOML (``grain:PATH.toml``), and
the disk cache that :meth:`GrainModel.optics` can be given.
:func:`redcorr.io.load_curve` accepts grain-model names wherever a law is.
"""

from redcorr.grains.emission import (
    DustEmission,
    GrainTemperatures,
    ModifiedBlackbodyFit,
    emission_spectrum,
    equilibrium_temperature,
    fit_modified_blackbody,
    grain_temperatures,
    optical_depth_ratios,
    thermal_energy,
)
from redcorr.grains.fields import DilutedBlackbody, MMP83Field, RadiationField
from redcorr.grains.materials import Material, OpticalConstants
from redcorr.grains.model import (
    DEFAULT_WAVE_UM,
    Component,
    GrainCurve,
    GrainModel,
    GrainOptics,
    PAHBlend,
)
from redcorr.grains.pah import pah_cross_section, pah_fraction
from redcorr.grains.published import mrn77_model, wd01_distributions, wd01_model
from redcorr.grains.sizes import (
    LogNormal,
    PowerLaw,
    PowerLawCutoff,
    SizeDistribution,
    TabulatedSizes,
    WD01Carbonaceous,
    WD01Silicate,
    mrn77,
)

__all__ = [
    "Material",
    "OpticalConstants",
    "Component",
    "GrainModel",
    "GrainOptics",
    "GrainCurve",
    "PAHBlend",
    "DEFAULT_WAVE_UM",
    "SizeDistribution",
    "PowerLaw",
    "PowerLawCutoff",
    "LogNormal",
    "WD01Silicate",
    "WD01Carbonaceous",
    "TabulatedSizes",
    "mrn77",
    "pah_cross_section",
    "pah_fraction",
    "wd01_distributions",
    "wd01_model",
    "mrn77_model",
    "RadiationField",
    "MMP83Field",
    "DilutedBlackbody",
    "GrainTemperatures",
    "DustEmission",
    "ModifiedBlackbodyFit",
    "equilibrium_temperature",
    "thermal_energy",
    "grain_temperatures",
    "emission_spectrum",
    "optical_depth_ratios",
    "fit_modified_blackbody",
]
