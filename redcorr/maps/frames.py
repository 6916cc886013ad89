"""Celestial frames: names to astropy frames, and positions carried from one frame to another."""

from astropy import units as u
from astropy.coordinates import BaseCoordinateFrame, UnitSphericalRepresentation, frame_transform_graph

from redcorr._validate import check_choice

__all__ = ["parse_frame", "transform_lonlat"]


def parse_frame(frame, name="frame"):
    """An astropy frame instance from a name (``"icrs"``, ``"galactic"``, ...) or a frame.

    Parameters
    ----------
    frame : str, `~astropy.coordinates.BaseCoordinateFrame` instance or subclass
        Any name known to :data:`astropy.coordinates.frame_transform_graph`.
    name : str
        Argument name for error messages.
    """
    if isinstance(frame, BaseCoordinateFrame):
        return frame
    if isinstance(frame, type) and issubclass(frame, BaseCoordinateFrame):
        return frame()
    cls = frame_transform_graph.lookup_name(str(frame).strip().lower())
    if cls is None:
        check_choice(name, frame, sorted(frame_transform_graph.get_names()), listed_by=None)
    return cls()


def transform_lonlat(lon_deg, lat_deg, from_frame, to_frame):
    """Carry longitude/latitude (degrees) from one astropy frame to another.

    The directions are transformed by :mod:`astropy.coordinates`; nothing is
    done when the two frames are equivalent.

    Returns
    -------
    lon_deg, lat_deg : ndarray
        In ``to_frame``, longitude in [0, 360).
    """
    if from_frame.is_equivalent_frame(to_frame):
        return lon_deg, lat_deg
    rep = UnitSphericalRepresentation(
        u.Quantity(lon_deg, u.deg, copy=False), u.Quantity(lat_deg, u.deg, copy=False)
    )
    out = from_frame.realize_frame(rep).transform_to(to_frame)
    sph = out.represent_as(UnitSphericalRepresentation)
    return sph.lon.to_value(u.deg), sph.lat.to_value(u.deg)
