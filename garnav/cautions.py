"""The safety cautions: one text, shown by the demo, `garnav route`, the web page and the docs.

README.md and docs/commands.md carry the Markdown form of :data:`CAUTIONS` between the markers
``<!-- cautions:begin -->`` and ``<!-- cautions:end -->``; ``tests/test_cautions.py`` checks that
they match this module word for word, so the four places cannot drift apart.

The distance guidance for magnets near implanted cardiac devices is the US Food and Drug
Administration's consumer update of 2021 on magnets in phones and smart watches (keep them at least
15 cm / 6 in from a pacemaker or defibrillator) — cited from memory; the skin-temperature limits are
those of IEC 60601-1 for applied parts of medical electrical equipment, named from memory as an
example of an applicable standard. garnav defers to the device maker, the wearer's clinician, the
applicable standards and qualified professionals; it certifies nothing.
"""

from __future__ import annotations

import textwrap

__all__ = ["CAUTIONS", "IMPLANT_GUIDANCE_MM", "caution_lines", "cautions_markdown", "CAUTIONS_BEGIN", "CAUTIONS_END"]

#: Published consumer guidance: keep magnets at least this far from an implanted cardiac device
#: (US FDA consumer update, 2021: "at least 6 inches (15 cm)"; from memory). A floor, not a
#: clearance: the device maker and the wearer's clinician decide.
IMPLANT_GUIDANCE_MM = 152.4

#: The cautions: (heading, text), in the order they are shown.
CAUTIONS: tuple[tuple[str, str], ...] = (
    ("Magnets and implanted devices",
     "The robot's holding magnets can disturb pacemakers, defibrillators, neurostimulators, insulin "
     "pumps, shunt valves and other implanted or worn electronics. Published consumer guidance (US FDA, "
     "2021, on magnets near implanted cardiac devices) says to keep magnets at least 15 cm (6 in) away; "
     "whether and how close a robot may come is for the device maker and the wearer's clinician to "
     "decide, not this plan."),
    ("MRI rooms",
     "Never take a robot or its magnets into an MRI room: the scanner's field pulls magnets and "
     "steel with great force."),
    ("Children and swallowed magnets",
     "Keep robots and loose magnets away from small children. Two swallowed magnets, or a magnet and "
     "a piece of steel, can pinch the gut between them and cause serious injury."),
    ("Pinched skin",
     "Skin or tissue caught between an inner and an outer magnet is squeezed by the full holding "
     "force; never let the inner magnet sit on bare skin and check the pull of every magnet pair."),
    ("Magnets letting go",
     "A magnet can let go at seam ridges, over thick or padded fabric, or on steep slopes; a falling "
     "robot can strike the wearer or someone nearby. Check the grip margins of every route "
     "(`garnav show --margins`) and test on a mannequin first."),
    ("Neck and face",
     "Keep robots away from the neck, face and hair. Mark them as hard keep-outs or body zones and do "
     "not rely on a plan alone: watch the robot whenever it is on a person."),
    ("Batteries",
     "Lithium cells on the back can be crushed when the wearer leans or lies down; do not charge them "
     "while the garment is worn; surfaces touching skin must stay within the temperature limits of the "
     "applicable standard (for example IEC 60601-1 for medical electrical equipment), and wearers with "
     "reduced sensation may not feel heat or pressure: supervise them closely. Stop a robot that gets "
     "warm, swells or smells."),
    ("Drift",
     "A robot driving counted turns and distances drifts away from its plan; keep the planned "
     "clearance larger than the drift (`garnav drift`) and correct it from sensing when you can."),
    ("Emergency stop",
     "Have a way to stop every robot at once within reach of the wearer and of the person "
     "supervising, and test it before every run."),
    ("What this plan is",
     "garnav plans routes; it certifies nothing. The device maker, clinicians, the standards that apply "
     "to your device and setting, and qualified professionals decide what is safe on a person."),
)

#: Markers around the generated Markdown block in README.md and docs/commands.md.
CAUTIONS_BEGIN = "<!-- cautions:begin (generated from garnav/cautions.py; tests/test_cautions.py checks it) -->"
CAUTIONS_END = "<!-- cautions:end -->"


def caution_lines(width: int = 96) -> list[str]:
    """The cautions as plain terminal text, one bullet per caution, wrapped at ``width`` columns.

    >>> caution_lines()[0]
    'Safety cautions:'
    """
    lines = ["Safety cautions:"]
    for heading, text in CAUTIONS:
        lines.extend(textwrap.wrap(f"{heading}: {text}", width=width, initial_indent="  - ",
                                   subsequent_indent="    ", break_on_hyphens=False))
    return lines


def cautions_markdown() -> str:
    """The cautions as a Markdown bullet list (the block between the markers in the docs)."""
    return "\n".join(f"- **{heading}.** {text}" for heading, text in CAUTIONS)
