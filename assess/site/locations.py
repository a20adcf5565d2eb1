"""What is known where: the populations of one bar layer (member and face).

Test results are pooled per zone by default. Where the data say more (readings
carry a member and a face), the updating steps add *local* populations, keyed by
``(member_id, face)`` for one member's face, or ``(None, face)`` for a face of
every member of the zone (e.g. all deck-top cover readings of a zone). A bar
layer takes the most specific population known for each quantity:

    member and face  >  face in the zone  >  zone

Faces are the words of the cover survey: ``"top"``, ``"bottom"``, ``"side"``.
"""

from __future__ import annotations

from collections.abc import Mapping

#: (member_id or None, face) -> quantity name -> population (e.g. `NormalGamma`).
LocalKnowledge = Mapping[tuple, Mapping[str, object]]

FACES = ("top", "bottom", "side")


def knowledge_at(
    zone_knowledge: Mapping[str, object],
    local: LocalKnowledge | None,
    member_id: str,
    face: str,
) -> dict[str, object]:
    """Populations for the bar layer of ``member_id`` on ``face``.

    Parameters
    ----------
    zone_knowledge : mapping
        Quantity name -> population of the member's zone.
    local : mapping, optional
        Local populations of the zone (see the module text); None or empty when
        the data are pooled per zone only.
    member_id, face : str
        The member and the face of its bar layer.
    """
    merged = dict(zone_knowledge)
    if local:
        merged.update(local.get((None, face), {}))
        merged.update(local.get((member_id, face), {}))
    return merged


__all__ = ["FACES", "LocalKnowledge", "knowledge_at"]
