"""Reddening looked up in dust maps held as arrays: HEALPix pixels or WCS images.

This package does no file I/O: :mod:`redcorr.io.maps` reads FITS files and
map descriptions into the classes below, which take plain (possibly
memory-mapped) arrays and header-derived parameters.

Conventions
-----------
* Positions are longitude/latitude in degrees (or angle Quantities) in any
  astropy celestial frame (``"icrs"``, ``"fk5"``, ``"galactic"``, a frame
  instance, ...). They are carried into the map's own frame with
  :mod:`astropy.coordinates`; HEALPix pixel indices and bilinear weights come
  from :mod:`astropy_healpix`; image pixel coordinates from :mod:`astropy.wcs`.
* A map holds E(B-V) or A_V (``ReddeningMap.unit``), in magnitudes; every value
  read is multiplied by ``ReddeningMap.scale``.
* ``lookup`` returns ``(values, flags)``. ``values`` is NaN exactly where
  ``flags`` has one of the bits `FLAG_OUTSIDE`, `FLAG_BLANK` or
  `FLAG_NO_POSITION` set:

  ====  ==================  ====================================================
  bit   name                meaning
  ====  ==================  ====================================================
  1     FLAG_OUTSIDE        no pixel of the map covers the position (partial
                            HEALPix map, outside every image)
  2     FLAG_BLANK          the position's pixel exists but is blank (NaN, the
                            HEALPix UNSEEN value or the image's BLANK value)
  4     FLAG_PARTIAL        bilinear only: some of the four interpolation
                            neighbours are missing or blank; the value uses the
                            others, with their weights renormalised
  8     FLAG_NO_POSITION    the input position is NaN or infinite
  ====  ==================  ====================================================

  :data:`MAP_FLAGS` names the bits (``outside``, ``blank``, ``partial``,
  ``no-position``, as :func:`describe_flags` prints them); a catalog
  correction has flag bits of its own (``redcorr.correction.CORRECTION_FLAGS``).

* "The position's pixel" is, for nearest-pixel lookup, the pixel containing
  the position; for bilinear lookup, the interpolation neighbour with the
  largest weight (for images exactly the containing pixel, for HEALPix the
  pixel whose centre is nearest in the interpolation's sense).
* Accuracy (measured by the tests on smooth synthetic maps): nearest-pixel
  errors scale with the pixel size h, bilinear errors with h²; on HEALPix
  within ~10° of the poles the four-neighbour scheme is first order only.
  Images are interpolated in pixel coordinates; an unrotated cylindrical
  image spanning 360° of longitude (plate carrée all-sky) wraps across its
  seam, other images flag their last half pixel `FLAG_PARTIAL`.

Modules
-------
``_base``
    :class:`ReddeningMap` (validation, chunked and threaded lookup), the
    flag bits, and how interpolation neighbours combine.
``frames``
    Frame names and the transformation of positions between frames.
``healpix``, ``image``
    The two kinds of map: HEALPix pixels and images with a celestial WCS.
"""

from redcorr._constants import INTERPOLATIONS, MAP_UNITS
from redcorr.maps._base import (
    FLAG_BLANK,
    FLAG_NO_POSITION,
    FLAG_OUTSIDE,
    FLAG_PARTIAL,
    MAP_FLAGS,
    ReddeningMap,
    describe_flags,
)
from redcorr.maps.frames import parse_frame, transform_lonlat
from redcorr.maps.healpix import HEALPIX_UNSEEN, HealpixReddeningMap
from redcorr.maps.image import ImageReddeningMap, ImageTile

__all__ = [
    "ReddeningMap",
    "HealpixReddeningMap",
    "ImageReddeningMap",
    "ImageTile",
    "FLAG_OUTSIDE",
    "FLAG_BLANK",
    "FLAG_PARTIAL",
    "FLAG_NO_POSITION",
    "MAP_FLAGS",
    "HEALPIX_UNSEEN",
    "INTERPOLATIONS",
    "MAP_UNITS",
    "describe_flags",
    "parse_frame",
    "transform_lonlat",
]
