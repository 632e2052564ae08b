"""Header synonyms per canonical field, as data.

The layout step normalises a header cell (see ``layout.normalise_header``:
lower case, footnote marks and "(Note 2)" removed, dotted abbreviations such
as ``H.P.`` joined, every other punctuation mark a space, ``Ø`` read as
``ph``) and then looks for these patterns in it.

Each pattern is a regular expression over that normalised text, matched on
whole words, with a weight: 1.0 for a word that names the field on its own,
less for a word that is ambiguous (``FEEDER`` may be the conductor column or
only a heading). A header's score for a field is the weight of the words the
patterns cover divided by the header's words that mean something (filler such
as ``motor``, ``size`` or a unit is not counted against it).

The spellings come from the trade usage collected in the project notes
(``/work/shared/reference/schedule-formats.md`` sections 1 and 6); the
weights are our own judgement ("common practice"), tuned by the tests.
"""
from __future__ import annotations

# Canonical field ids a column can map to (order = report order).
FIELDS: tuple[str, ...] = (
    "tag", "description", "quantity", "hp", "kw", "voltage", "phase", "frequency", "voltage_phase",
    "fla", "mca", "mocp", "duty", "starting", "drive_input", "motor_type", "service_factor", "temp_rise", "rpm",
    "enclosure",
    "conductor", "bond", "raceway", "length", "ambient", "ccc", "ocpd", "ocpd_type", "overload", "disconnect",
    "fed_from", "remarks",
)

_VOLT = r"(?:v|volts?|voltage|kv)"
_PHASE = r"(?:ph|phase|phases)"
_HZ = r"(?:hz|hertz|freq|frequency|cycles?|cy)"
_AMPS = r"(?:a|amps?|amperes?|ampacity|current)"
_DEVICE = r"(?:fuses?|breakers?|brkr|bkr|cb|ckt bkr|ocp|ocpd|overcurrent|protection|protective device|hacr)"

# field -> ((regex, weight), ...)
FIELD_PATTERNS: dict[str, tuple[tuple[str, float], ...]] = {
    "tag": (
        (r"tag|mark|numtag|tag no|mark no", 1.0),
        (r"(?:equip|equipment|motor|item|unit|load|device|drive) (?:tag|mark|no|number|id)", 1.0),
        (r"equip|motor no|motor id|motor tag|eqpt", 0.9),
        (r"item", 0.8),
        (r"unit|equipment", 0.7),
        (r"load|id", 0.6),
    ),
    "description": (
        (r"description|desc|descr|service|load description|driven (?:equipment|load)", 1.0),
        (r"(?:equipment|equip|motor|load|unit) (?:name|description|desc|service)", 1.0),
        (r"name|function|application|duty description", 0.8),
        (r"kind|area served|serves", 0.7),
        (r"equipment", 0.65),
    ),
    "quantity": (
        (r"qty|quantity|no of units|number of units|no req d|count", 1.0),
    ),
    "hp": (
        (r"hp|horsepower|horse power|motor hp|hp rating", 1.0),
        (r"motor size|motor rating", 0.8),
    ),
    "kw": (
        (r"kw|kilowatts?|kilo watts?|rated power|motor kw|output kw|power kw", 1.0),
        (r"power|output", 0.6),
    ),
    "voltage": (
        (r"volts?|voltage|v|kv|system voltage|supply voltage|nameplate voltage", 1.0),
    ),
    "phase": (
        (r"ph|phase|phases|no of phases", 1.0),
    ),
    "frequency": (
        (r"hz|hertz|frequency|freq|cycles", 1.0),
    ),
    "voltage_phase": (
        (_VOLT + r"(?: (?:and )?(?:" + _PHASE + "|" + _HZ + r"))+", 1.0),
        (_PHASE + r"(?: (?:and )?(?:" + _VOLT + "|" + _HZ + r"))+", 0.9),
        (r"power supply|electrical characteristics|elec char", 0.6),
    ),
    "fla": (
        (r"fla|flc|f l a|f l c|rla|full load(?: " + _AMPS + r")?|nameplate (?:amps?|amperes?|current|fla)", 1.0),
        (r"motor (?:amps?|amperes?|current)|running (?:amps?|current)|rated (?:load )?(?:amps?|current)", 1.0),
        (r"amps?|amperes?|ampere|amperage", 0.8),
        (r"current", 0.6),
    ),
    "mca": (
        (r"mca|wsa|min(?:imum)? (?:circuit|ckt) (?:amps?|amperes?|ampacity|current)", 1.0),
        (r"wire sizing (?:amps?|amperes?)|min(?:imum)? ampacity|circuit ampacity", 1.0),
    ),
    "mocp": (
        (r"mocp|mop|mfs|max(?:imum)?(?: \w+){0,3} " + _DEVICE + r"(?: (?:or|and)?(?: \w+){0,2} " + _DEVICE + r")?", 1.0),
        (r"max(?:imum)? (?:ocpd?|overcurrent)(?: protection| device)?", 1.0),
        (r"hacr", 0.8),
    ),
    "duty": (
        (r"duty|duty cycle|duty rating|duty type|time rating|service duty", 1.0),
        (r"rating", 0.6),
    ),
    "starting": (
        (r"starter|starters|starting|starting method|start method|starter type|motor starter|method of starting", 1.0),
        (r"controller|motor controller|control type|starter size", 0.8),
        (r"vfd|vsd|drive|control", 0.6),
    ),
    "drive_input": (
        (r"(?:vfd|vsd|afd|asd|drive|inverter)(?: rated)? input(?: " + _AMPS + r")?", 1.0),
        (r"(?:rated )?input (?:amps?|amperes?|current)", 0.9),
    ),
    "motor_type": (
        (r"motor type|type of motor|rotor|rotor type|motor kind|motor design", 1.0),
    ),
    "service_factor": (
        (r"service factor|sf|s f", 1.0),
    ),
    "temp_rise": (
        (r"temp rise|temperature rise|rise|rated rise|insulation rise", 1.0),
    ),
    "rpm": (
        (r"rpm|r p m|speed|sync speed|synchronous speed", 1.0),
    ),
    "enclosure": (
        (r"encl|enclosure|enclosure type|motor enclosure|nema enclosure|nema encl", 1.0),
    ),
    "conductor": (
        (r"conductors?|cond|wire|wires|wiring|cables?|conductor size|branch conductors?", 1.0),
        (r"(?:wire|conductors?|cables?|feeder) (?:and )?conduit|conduit (?:and )?(?:wire|conductors?|cables?)", 1.0),
        (r"(?:phase|power|branch|circuit|motor|field power) (?:wire|wires|conductors?|cables?)", 1.0),
        (r"branch circuit|feeder size|feeder conductors?", 0.8),
        (r"feeders?|feed", 0.6),
    ),
    "bond": (
        (r"bond|bonding|bonding conductor|bond wire|bond conductor|egc", 1.0),
        (r"(?:ground|grounding|gnd|grd)(?: (?:wire|conductor|cond))?", 1.0),
        (r"equipment (?:ground|grounding|bonding)(?: conductor)?", 1.0),
    ),
    "raceway": (
        (r"conduit|conduits|raceway|raceways|conduit size|conduit type|duct", 1.0),
        (r"tray", 0.6),
    ),
    "length": (
        (r"length|run length|distance|feeder length|circuit length|len|route length", 1.0),
    ),
    "ambient": (
        (r"ambient|ambient temp|ambient temperature|amb|amb temp", 1.0),
    ),
    "ccc": (
        (r"ccc|no of ccc|ccc in raceway|current carrying|current carrying conductors|no of current carrying conductors", 1.0),
    ),
    "ocpd": (
        (r"ocpd|ocp|overcurrent|overcurrent protection|overcurrent device|branch protection", 1.0),
        (r"(?:branch )?(?:circuit )?(?:short circuit )?protection|protective device|branch circuit protection", 1.0),
        (r"(?:circuit )?breakers?|brkr|bkr|cb|mcp|fuses?|fuse size|breaker size|trip|breaker trip", 0.9),
        (r"(?:breaker|fuse|cb|brkr) (?:rating|trip|amps?|size)|trip rating|fuse rating", 1.0),
        (r"protection", 0.8),
    ),
    "ocpd_type": (
        (r"fuse cb|cb fuse|fuse or cb|cb or fuse|fuse breaker type", 1.0),
        (r"(?:ocpd|ocp|breaker|fuse|device|protection|protective device|overcurrent|overcurrent device) type", 1.0),
        (r"type of (?:ocpd|ocp|protection|device|protective device|overcurrent device)|fuse class|fuse type", 1.0),
    ),
    "overload": (
        (r"overloads?|ol|o l|ol setting|overload setting|overload relay|overload heater|thermal overload", 1.0),
        (r"heaters?|heater (?:amps?|amperes?|ampere|size|element)", 1.0),
        (r"olr", 0.9),
    ),
    "disconnect": (
        (r"disconnect|disconnects|disc|disc size|disconnect switch|disconnecting means|isolator|nfd", 1.0),
        (r"safety switch|local disconnect|isolating switch|isolation switch|disconnect size|disconnect type", 1.0),
        (r"switch", 0.7),
    ),
    "fed_from": (
        (r"fed from|feeder from|fed by|supplied from|supply from|source|power source|feeding from", 1.0),
        ((r"(?:panel|pnl|mcc|switchboard|board|distribution)(?: (?:ckt|circuit|bucket|cubicle|unit|no|number|"
          r"section|cct|bkt|position|designation))*"), 0.8),
        (r"ckt|circuit|cct|bucket|cubicle|location in mcc|mcc location", 0.6),
    ),
    "remarks": (
        (r"remarks?|notes?|comments?", 1.0),
    ),
}


def _words(text: str) -> frozenset[str]:
    return frozenset(text.split())


# Words that neither help nor hurt a match: qualifiers, units, materials.
# A header made only of these (``SIZE``) matches nothing on its own.
FILLER_WORDS: frozenset[str] = _words(
    "motor motors nom nominal rated the of in and or for at per each data value values size sizes no "
    "number num a amp v in inch inches ft feet m mm mm2 sq awg kcmil mcm c deg degc f cu al copper "
    "aluminum aluminium thhn thwn rw rwu teck xlpe"
)

# Leaf words that are header vocabulary even though they map to no field
# by themselves (they qualify a group above them: BREAKER / SIZE).
GENERIC_HEADER_WORDS: frozenset[str] = _words(
    "size type trip frame rating setting amps a poles pole class model make mfr manufacturer location "
    "from to lra bhp cfm gpm esp weight qty no number remarks sets set material insulation"
)

# Unit tokens that can form a units row under the leaf header row.
UNIT_WORDS: frozenset[str] = _words(
    "a amp amps ampere amperes v volt volts kv hp kw w watts hz ph phase % ft feet m mm mm2 in inch "
    "inches awg kcmil mcm c degc f degf deg rpm s sec min sf pu ohm ohms kva va"
)

# When a group heading maps to the key field, a leaf mapping to one of the
# value fields really names a part of the group (CONDUCTORS / PHASE is the
# phase-conductor size, not the number of phases).
GROUP_ABSORBS: dict[str, frozenset[str]] = {
    "conductor": frozenset({"phase", "quantity", "voltage", "description"}),
    "bond": frozenset({"quantity"}),
    "raceway": frozenset({"quantity", "description", "phase"}),
    "ocpd": frozenset({"quantity", "phase", "fla", "description", "duty"}),
    "overload": frozenset({"fla", "quantity", "duty"}),
    "disconnect": frozenset({"quantity", "phase", "fla", "description", "duty"}),
    "starting": frozenset({"quantity", "description", "duty"}),
    "mocp": frozenset({"fla", "duty"}),
}

# A motor schedule needs one of these ...
TAG_FIELDS: frozenset[str] = frozenset({"tag", "description"})
# ... and at least MIN_MOTOR_FIELDS of these.
MOTOR_FIELDS: frozenset[str] = frozenset({"hp", "kw", "fla", "voltage", "voltage_phase", "mca", "mocp"})
MIN_MOTOR_FIELDS = 2
