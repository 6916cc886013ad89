"""The edge of the grain models: names, files and the disk cache.

:mod:`redcorr.grains` computes with objects; this package makes them.

* :mod:`redcorr.io.grains.tables`: the packaged optical constants and WD01
  Table 1, and a user's tables of optical constants or grain sizes.
* :mod:`redcorr.io.grains.models`: the packaged materials and named grain
  models (:func:`get_material`, :func:`get_grain_model`), and models
  described in TOML (:func:`read_grain_model`, ``grain:PATH.toml``).
* :mod:`redcorr.io.grains.cache`: computed cross sections on disk
  (:class:`GridCache`); the command line, the terminal UI and
  :func:`redcorr.io.load_curve` pass :func:`default_cache` to
  :meth:`redcorr.grains.GrainModel.optics`.

Named models::

    >>> from redcorr.io.grains import get_grain_model, list_grain_models
    >>> [m["name"] for m in list_grain_models()]
    ['mrn77', 'wd01-rv3.1', 'wd01-rv4.0', 'wd01-rv5.5']
"""

from redcorr.io.grains.cache import CACHE_ENV, GridCache, default_cache
from redcorr.io.grains.models import (
    GRAIN_MODELS,
    MATERIALS,
    build_component,
    get_grain_model,
    get_material,
    list_grain_models,
    list_materials,
    read_grain_model,
    wd01_sizes,
)
from redcorr.io.grains.tables import packaged_optical_constants, read_optical_constants, read_size_table, wd01_table

__all__ = [
    "MATERIALS",
    "GRAIN_MODELS",
    "get_material",
    "list_materials",
    "wd01_sizes",
    "get_grain_model",
    "list_grain_models",
    "build_component",
    "read_grain_model",
    "packaged_optical_constants",
    "wd01_table",
    "read_optical_constants",
    "read_size_table",
    "GridCache",
    "default_cache",
    "CACHE_ENV",
]
