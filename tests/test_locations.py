"""Most specific population wins: member and face > face in the zone > zone."""

from assess.site.locations import knowledge_at


def test_most_specific_population_wins():
    zone = {"cover": "zone cover", "concrete": "zone concrete"}
    local = {
        (None, "top"): {"cover": "top cover"},
        ("S1", "top"): {"cover": "S1 top cover", "area_ratio": "S1 top loss"},
    }
    assert knowledge_at(zone, local, "S1", "top") == {
        "cover": "S1 top cover",
        "concrete": "zone concrete",
        "area_ratio": "S1 top loss",
    }
    assert knowledge_at(zone, local, "S2", "top")["cover"] == "top cover"
    assert knowledge_at(zone, local, "S1", "bottom") == zone
    assert knowledge_at(zone, None, "S1", "top") == zone
