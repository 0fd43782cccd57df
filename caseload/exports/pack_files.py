"""One patient's referral pack in the format asked for: the renderer a front end hands to
`Clinic.referral_pack`."""

from __future__ import annotations

from caseload.application.referral import PackInput
from caseload.exports import pack


def render(content: PackInput, fmt: str, paper: str) -> bytes:
    """The pack as a PDF on `paper` ('pdf') or as one HTML page ('html')."""
    built = pack.build(content)
    if fmt == "pdf":
        # Imported here: the PDF library takes about a second to load, which no other command should pay.
        from caseload.exports import pack_pdf

        return pack_pdf.render(built, paper)
    return pack.html(built).encode("utf-8")
