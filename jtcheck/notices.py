"""Fixed wording shown with every result and record."""

CAUTION = (
    "Screening aid only. These results support, and do not replace, the applicable codes (for example "
    "ASME B31.3, ASME BPVC Section VIII, API 520/521 or their local equivalents) and review by a competent, "
    "licensed engineer. The user is responsible for the inputs and for the material temperature limits; "
    "limits shipped with jtcheck are typical values to verify against the applicable code edition."
)

DEMO_NOTICE = "Demo data: the Kestrel Ridge gas terminal and every number in its cases are invented."
