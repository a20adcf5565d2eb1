"""The cautions printed by the CLI and written into every report."""

CAUTION = (
    "Decision support only. The numbers are only as good as the inputs (design "
    "information, test data, models and their published parameters). They do not "
    "replace the judgement of a licensed structural engineer, who decides together "
    "with the local codes and authorities in force."
)
