"""Reddening looked up in dust maps held as arrays: HEALPix pixels or WCS images, with or without distance.

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
* A distance-resolved (3D) map (``ReddeningMap.has_distance``) holds, per
  pixel, the cumulative value from the Sun out to each of its distances
  ``ReddeningMap.distances_pc`` (pc, strictly increasing). ``lookup(...,
  distance=...)`` interpolates it linearly in distance, from 0 at distance 0
  to the first distance and between the others; beyond the last distance it
  gives the last value (flag `FLAG_BEYOND`). A distance may be exact
  (numbers in pc or a length Quantity) or a distribution
  (:class:`DistanceSamples`): then the value is the weighted mean over its
  nodes and ``return_error=True`` adds the weighted standard deviation. A
  3D map asked without a distance gives its last distance's value with
  `FLAG_BEYOND`; a 2D map given a distance ignores it with a
  :class:`~redcorr.exceptions.DistanceIgnoredWarning`.
* ``lookup`` returns ``(values, flags)`` (``(values, errors, flags)`` with
  ``return_error=True``). ``values`` is NaN exactly where ``flags`` has one
  of the bits `FLAG_OUTSIDE`, `FLAG_BLANK`, `FLAG_NO_POSITION` or
  `FLAG_NO_DISTANCE` set:

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
  16    FLAG_BEYOND         3D maps: the distance lies beyond the map's last
                            distance, or none was given; the value is the
                            map's last value (all the dust the map knows of,
                            possibly less than lies in front of the object).
                            For a distance distribution: more than
                            `BEYOND_WEIGHT` (5 %) of its weight lies beyond
  32    FLAG_NO_DISTANCE    3D maps: the object's distance is NaN, infinite
                            or negative (a distribution: NaN nodes); the
                            position is not looked up
  ====  ==================  ====================================================

  The distance bits describe the distance whatever the sky bits say; a
  position without a usable distance is not looked up, so it carries no
  sky bit besides `FLAG_NO_POSITION`. :data:`MAP_FLAGS` names the bits
  (``outside``, ``blank``, ``partial``, ``no-position``, ``beyond``,
  ``no-distance``, as :func:`describe_flags` prints them); a catalog
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
  seam, other images flag their last half pixel `FLAG_PARTIAL`. In
  distance the interpolation is linear: its error is at most
  Δd²/8·max|E''| between map distances Δd apart.

Modules
-------
``_base``
    :class:`ReddeningMap` (validation, chunked and threaded lookup), the
    flag bits, how interpolation neighbours combine and how a
    distance-resolved map is interpolated in distance.
``distance``
    :class:`DistanceSamples`: the distances to look up at, exact or as
    distributions (e.g. from parallaxes).
``frames``
    Frame names and the transformation of positions between frames.
``healpix``, ``image``
    The two kinds of map: HEALPix pixels and images with a celestial WCS.
"""

from redcorr._constants import INTERPOLATIONS, MAP_UNITS
from redcorr.maps._base import (
    BEYOND_WEIGHT,
    FLAG_BEYOND,
    FLAG_BLANK,
    FLAG_NO_DISTANCE,
    FLAG_NO_POSITION,
    FLAG_OUTSIDE,
    FLAG_PARTIAL,
    MAP_FLAGS,
    ReddeningMap,
    check_distances,
    describe_flags,
)
from redcorr.maps.distance import EDSD_LENGTH_SCALE_PC, PRIOR_FRACTION, DistanceSamples, edsd_mode, prior_dominated
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
    "FLAG_BEYOND",
    "FLAG_NO_DISTANCE",
    "BEYOND_WEIGHT",
    "MAP_FLAGS",
    "DistanceSamples",
    "edsd_mode",
    "prior_dominated",
    "EDSD_LENGTH_SCALE_PC",
    "PRIOR_FRACTION",
    "check_distances",
    "HEALPIX_UNSEEN",
    "INTERPOLATIONS",
    "MAP_UNITS",
    "describe_flags",
    "parse_frame",
    "transform_lonlat",
]
