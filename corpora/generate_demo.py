#!/usr/bin/env python3
"""Generate the postassay demo bench: an ENTIRELY INVENTED corpus of short posts.

Everything written by this script is made up: the harbour city of Quillhaven,
its districts, streets, ferry and tram lines, its festival, club, chapel,
bike-share scheme and ferry operator, and every post, handle and timestamp.
No real person, brand or city is meant. URLs use only the reserved hosts
example.org / example.com / *.invalid, and @user@host handles use the
reserved `.example` top-level domain.

Writes, relative to the repository root (whatever the current directory):
  corpora/demo/posts.jsonl      one JSON object per line: id, text, [lang], author, ts
  judgments/demo/queries.csv    query_id,text,lang,tags
  judgments/demo/qrels.csv      query_id,doc_id,grade   (grades 0..3)

Python 3.11 standard library only. Fully deterministic: one random.Random
with a fixed seed, no dependence on hash order, dict order is insertion
order; running it twice gives byte-identical files (checked below by building
twice in one process and comparing).

How the bench is built. Every post is drawn from a *topic* (for example
`ferry_delay` in German, or the trap topic `club_universe`), and each query
lists the topics that answer it with a grade 3/2/1. A post's grade for a
query is therefore a function of what the post is about, never of its words:
  3 = directly answers the query's topic in the right sense,
  2 = clearly on topic, 1 = marginally related, 0 = judged non-relevant.
Each query is judged in its own language: the searcher reads that language,
so an on-topic post in another language is left unjudged (neither relevant
nor "non-relevant"); code-switched posts count for both their languages.
Judged per query ("the pool"): every in-language post of a graded topic, the
planted lexical distractors (trap topics), posts that share a crude word stem
with the query, and a few random posts. Most of the corpus stays unjudged.

Run `python3 corpora/generate_demo.py` to regenerate; it prints the counts
that corpora/README.md quotes, and asserts its own invariants. With
`--simulate` it also runs a rough stdlib-only BM25 simulation with toy
analysers and asserts that the planted effects point the intended way.
"""

from __future__ import annotations

import csv
import io
import json
import math
import random
import re
import statistics
import sys
from collections import Counter
from pathlib import Path

SEED = 20260614
LANGS = ("en", "de", "fr", "es", "it", "pt", "nl")
# Target number of posts per primary language (fillers top each one up).
LANG_TARGET = {"en": 1520, "de": 560, "fr": 500, "es": 450, "it": 340, "pt": 330, "nl": 300}
DECLARE_P = 0.30  # share of posts that declare their `lang`
QUERY_TAGS = (
    "inflected",
    "hashtag-only",
    "multiword",
    "accented",
    "short",
    "non-english",
    "overstem",
    "code-switched",
    "mention",
)
ROOT = Path(__file__).resolve().parent.parent

# ---------------------------------------------------------------------------
# Slot values (the invented city). `{name}` in a template is replaced by a
# random value of slot `name`; `{name2}` picks a value different from `{name}`.
# ---------------------------------------------------------------------------

COMMON_SLOTS = {
    "fline": ["F1", "F2", "F3"],
    "tline": ["1", "2", "3", "5", "6"],  # line 4 is kept for one planted query
    "district": [
        "Lanternquay", "Saltworks", "Ropewalk", "Tidewell",
        "Copperhill", "Northmole", "Eelbrook", "Gullstone",
    ],
    "street": ["Anchorgate", "Kelpgate", "Brine Row", "Capstan Row", "Tarpaulin Steps", "Mizzen Yard"],
    "stop": ["Anchorgate", "Kelpgate", "Copperhill", "Saltworks", "Eelbrook", "Ropewalk"],
    "pier": ["Lanternquay", "Northmole", "Gullstone", "Tidewell"],
    "time": [f"{h}:{m:02d}" for h in range(6, 23) for m in (0, 10, 20, 30, 40, 50)],
    "min": [str(m) for m in range(10, 60, 5)],
    "pct": [str(p) for p in range(6, 26)],
    "kmh": [str(k) for k in range(80, 125, 5)],
    "opmention": ["@QuillFerries", "@quillferries@social.example", "@QuillFerries"],
    "emoji": [
        "😡", "🙄", "😩", "😂", "🥲", "😍", "🌊", "⛴️", "🚋", "🚲", "🌧️", "⛈️", "🐟", "🦪", "☕",
        "🎶", "👍🏽", "👍🏻", "👌🏾", "🙏🏼", "🚴🏻‍♀️", "🚴🏿‍♂️", "👩‍👧", "👨‍👩‍👦", "🧑‍🍳", "🏳️‍🌈",
        "❤️", "🤦🏽‍♂️", "🤷🏼‍♀️", "🔥", "💨", "🌅", "😴", "🥹", "🫠", "👀", "🙃", "✨",
    ],
    "url": [
        "https://example.org/quillhaven/p/8831",
        "https://example.com/photos/2231",
        "http://quillhaven.invalid/news/412",
        "https://example.org/q/7f3a",
        "https://example.com/v/ab12cd",
        "https://www.example.org/city/notice?id=77",
    ],
}

LANG_SLOTS = {
    "en": {
        "cause": ["fog", "the wind", "the swell", "a crew shortage", "engine trouble"],
        "food": ["cinnamon buns", "fish soup", "pancakes", "crab rolls", "noodles", "chips", "croissants"],
        "weekday": ["Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday"],
        "flag": ["🇬🇧", "🇮🇪", "🇺🇸"],
    },
    "de": {
        "cause": ["Nebel", "Sturm", "Personalmangel", "einer Motorstörung", "hohem Wellengang"],
        "food": ["Franzbrötchen", "Fischbrötchen", "Schnitzel", "Eis", "Brötchen"],
        "weekday": ["Montag", "Dienstag", "Mittwoch", "Donnerstag", "Freitag", "Samstag", "Sonntag"],
        "flag": ["🇩🇪", "🇦🇹", "🇨🇭"],
    },
    "fr": {
        "cause": ["du brouillard", "du vent", "du manque de personnel", "de la houle"],
        "food": ["des crêpes", "une galette", "des moules-frites", "un croissant", "une tarte aux pommes"],
        "weekday": ["lundi", "mardi", "mercredi", "jeudi", "vendredi", "samedi", "dimanche"],
        "flag": ["🇫🇷", "🇧🇪", "🇨🇭"],
    },
    "es": {
        "cause": ["la niebla", "el viento", "el temporal", "la falta de personal"],
        "food": ["churros", "una tortilla", "calamares", "unas tapas", "un bocadillo"],
        "weekday": ["lunes", "martes", "miércoles", "jueves", "viernes", "sábado", "domingo"],
        "flag": ["🇪🇸", "🇲🇽", "🇦🇷"],
    },
    "it": {
        "cause": ["la nebbia", "il vento", "il mare mosso", "la mancanza di personale"],
        "food": ["una pizza", "un cornetto", "la focaccia", "un gelato", "gli arancini"],
        "weekday": ["lunedì", "martedì", "mercoledì", "giovedì", "venerdì", "sabato", "domenica"],
        "flag": ["🇮🇹", "🇨🇭"],
    },
    "pt": {
        "cause": ["do nevoeiro", "do vento", "da ondulação", "da falta de pessoal"],
        "food": ["pastéis de nata", "uma bifana", "sardinhas", "um prego", "caldo verde"],
        "weekday": ["segunda", "terça", "quarta", "quinta", "sexta", "sábado", "domingo"],
        "flag": ["🇵🇹", "🇧🇷"],
    },
    "nl": {
        "cause": ["de mist", "de wind", "personeelstekort", "een motorstoring"],
        "food": ["stroopwafels", "kibbeling", "appeltaart", "bitterballen", "poffertjes"],
        "weekday": ["maandag", "dinsdag", "woensdag", "donderdag", "vrijdag", "zaterdag", "zondag"],
        "flag": ["🇳🇱", "🇧🇪"],
    },
}

# Hashtags any post of a language may carry (about the city, not a topic).
GENERIC_TAGS = {
    "en": ["#Quillhaven", "#quillhavenlife", "#nofilter", "#goodmorning", "#mondays"],
    "de": ["#Quillhaven", "#Wochenende", "#moin", "#Quillhaven"],
    "fr": ["#Quillhaven", "#bonjour", "#weekend"],
    "es": ["#Quillhaven", "#buenosdias", "#finde"],
    "it": ["#Quillhaven", "#buongiorno", "#weekend"],
    "pt": ["#Quillhaven", "#bomdia", "#fimdesemana"],
    "nl": ["#Quillhaven", "#goedemorgen", "#weekend"],
}
GENERIC_MENTIONS = ["@QuillhavenCity", "@harbourwatch", "@quill_trams", "@saltworks_fest@social.example"]

# ---------------------------------------------------------------------------
# Topics. topic -> lang -> spec. A spec gives how many posts to draw, the
# templates, texture hashtags, and flags. `langs` lists every language a
# code-switched post is written in (its first entry is the primary one).
# ---------------------------------------------------------------------------

TOPICS: dict[str, dict[str, dict]] = {}


def topic(name, lang, n, templates, tags=(), tag_p=0.25, two_word=False, langs=None, declare_p=DECLARE_P):
    """Register `n` posts of topic `name` in language `lang`."""
    TOPICS.setdefault(name, {})[lang] = {
        "n": n,
        "templates": list(templates),
        "tags": list(tags),
        "tag_p": tag_p,
        "two_word": two_word,
        "langs": tuple(langs) if langs else (lang,),
        "declare_p": declare_p,
    }


FERRY_TAGS_EN = ["#QuillFerries", "#ferrylife", "#commute"]
TRAM_TAGS_EN = ["#trams", "#commute"]
BIKE_TAGS_EN = ["#bikelife", "#twowheels"]
STORM_TAGS = ["#storm2026", "#Quillhaven"]
LOST_TAGS_EN = ["#lost_and_found", "#LostAndFound", "#pleaseshare"]

# ===== English: transport ==================================================

topic("ferry_delay", "en", 24, [
    "{fline} delayed again, {min} minutes stuck at {pier} {emoji}",
    "Ferries running late all morning, everything delayed by {cause}",
    "The {time} ferry was delayed {min} min. Again.",
    "All ferries delayed because of {cause}, bring a book",
    "Delayed ferry = missed meeting. Thanks {opmention}",
    "Another delay on the {fline}, {min} minutes this time. Why is this normal",
    "Is the {fline} ferry delayed or am I at the wrong pier?",
    "ferries delayed, {cause}. coffee first then",
    "{min} min delay on the ferry to Gullstone, kids are losing it {emoji}",
    "The ferries are delayed again and nobody at {pier} knows why",
    "Big delay on both ferries to Tidewell, {cause} apparently",
    "Ferries to Gullstone delayed until further notice",
    "Ferry delays every single day this week. Every. Single. Day.",
    "The boat to Gullstone is running late again, {min} min and counting",
    "Waiting at {pier} for forty minutes, where is the boat",
], tags=FERRY_TAGS_EN)

topic("ferry_cancel", "en", 18, [
    "The {time} sailing to Gullstone is cancelled, {cause}",
    "They cancelled the last sailing again, stuck at {pier}",
    "{opmention} cancels every sailing after 6pm tonight",
    "Cancellation of the {time} sailing, no announcement, great",
    "Every sailing cancelled until the swell drops",
    "Cancellations all afternoon, next sailing maybe at 5",
    "All sailings cancelled till 3pm because of {cause}",
    "Ferry service cancelled for the morning, {cause}",
    "{fline} cancelled this afternoon, {cause}. Taxi it is",
], tags=FERRY_TAGS_EN)

# Two-word posts for the `short` query: detection on two words is unreliable,
# so language routing often sends them to the wrong stemmer (or none).
topic("ferry_cancel_short", "en", 12, [
    "Ferries cancelled.", "Ferry cancelled {emoji}", "ferries cancelled!!",
    "Ferry cancelled", "Sailings cancelled.", "ferries cancelled {emoji}", "Crossings cancelled",
], tags=(), tag_p=0.0, two_word=True, declare_p=0.08)

topic("night_ferry_tag", "en", 14, [
    "Last boat home at 00:40, half asleep already #NightFerry",
    "Crew on the #nightferry handed out blankets {emoji}",
    "#NightFerry is back from Friday!! Saltworks to Gullstone till 2am",
    "Singing students on the #NightFerry, love this city",
    "Stars from the deck of the #nightferry, absolutely worth it",
    "Missed the #NightFerry by one minute. Pier bench it is",
    "Quietest crossing of my life on the #nightferry {emoji}",
    "Who else takes the #NightFerry after the late shift?",
], tag_p=0.0)

topic("night_ferry", "en", 4, [
    "The night ferry to Gullstone runs again from Friday, every hour till 2",
    "Night ferry timetable is finally online {url}",
], tags=FERRY_TAGS_EN)

topic("ferry_general", "en", 34, [
    "Sunset from the {fline} {emoji}",
    "Ferry to Gullstone for lunch, best twelve minutes of the day",
    "Dolphins next to the ferry this morning!!",
    "The {fline} ferry is basically my office now",
    "New ferry boats are so quiet, I miss the rumble",
    "Took the kids on the ferry just for fun {emoji}",
    "Reading on the ferry deck, wind in my hair, bliss",
    "The view of Copperhill from the ferry never gets old",
    "Ferry crew saved my hat from going overboard {emoji}",
    "Sea was glassy on the {fline} this morning",
], tags=FERRY_TAGS_EN)

topic("ferry_fare", "en", 12, [
    "Ferry tickets going up again in May, 4.80 for one crossing",
    "The price of a ferry ticket is now more than a sandwich",
    "Fare increases on all ferries from May",
    "Ticket prices for the ferries are up 20% since last year",
    "Monthly ferry pass priced at 95 now, lovely",
    "Ticket price increases again for the ferries, who signed off on this",
    "Ferry ticket priced like a plane ticket, this city {emoji}",
], tags=FERRY_TAGS_EN)

topic("ticket_machine", "en", 5, [
    "Ferry ticket machine at {pier} only takes cards now",
    "The ticket machine on the pier ate my coins",
], tags=FERRY_TAGS_EN)

topic("ferry_wifi", "en", 2, [
    "Ferry wifi died halfway across, back to staring at the sea",
    "Is there wifi on the new ferry? Asking for a remote worker",
], tag_p=0.0)

topic("ferry_refund", "en", 4, [
    "@QuillFerries still waiting on my refund from March",
    "@quillferries@social.example how long does a refund take for a cancelled sailing?",
    "Refund for the cancelled {fline} finally arrived, thanks @QuillFerries",
    "@QuillFerries the refund form doesn't load on my phone",
], tag_p=0.0)

topic("sailing_club", "en", 8, [
    "Sailing lessons for kids at Northmole this summer",
    "Sailing regatta on Sunday, the bay will be full of sails",
    "Sailing club open day, free hot chocolate {emoji}",
    "Learning sailing at 40, capsized twice, loved it",
], tags=["#sailing"])

topic("event_cancel", "en", 6, [
    "Outdoor cinema cancelled because of the wind",
    "Yoga on the beach cancelled, rain again",
    "Kids' football cancelled, pitch is a lake",
])

topic("tram_delay", "en", 14, [
    "Tram delays on line {tline} again {emoji}",
    "More delays on tram {tline}, stuck at {stop}",
    "Tram {tline} delays are getting ridiculous",
    "Delays on every tram line this morning",
    "Signal fault at {stop}, delays on trams {tline} and {tline2}",
], tags=TRAM_TAGS_EN)

topic("tram_breakdown", "en", 14, [
    "Another tram breakdown at {stop}. Walking it is {emoji}",
    "Breakdown on line {tline}, trams backed up all the way to {stop}",
    "Tram {tline} stalled on the bridge, driver says it's a breakdown",
    "Third tram breakdown this week on the {stop} line",
    "Two trams stalled at {stop}, breakdown crew on the way",
    "breakdown at {stop} again, trams not moving",
    "Trams stuck behind a breakdown near {stop} {emoji}",
    "Tram breakdown right outside my window, the bell keeps ringing",
    "Tram {tline} died at {stop}, everybody out and walking",
], tags=TRAM_TAGS_EN)

topic("tram_costs", "en", 3, [
    "Cost breakdowns for the new tram line are published {url}",
    "Budget breakdowns for the tram extension are a fun read",
])

topic("tram_stop", "en", 14, [
    "The tram stop at {stop} moved across the road, no sign at all",
    "No shelter at the tram stop on {street}, soaked again",
    "Which tram stop is closest to the ferry terminal?",
    "New tram stop at {stop} opens Monday",
    "The tram stop display at {stop} has said 2 min for ten minutes",
    "Tram stop at {stop} closed for works, walk to {stop2}",
    "Benches finally installed at my tram stop {emoji}",
], tags=TRAM_TAGS_EN)

topic("stop_the_tram", "en", 26, [
    "Say no to the new tram line through Ropewalk #StopTheTram",
    "Meeting tonight at the community hall #StopTheTram",
    "#StopTheTram banners all over Capstan Row this morning",
    "Petition has 3000 signatures already #StopTheTram",
    "Not everyone in Ropewalk wants rails outside the door #StopTheTram",
    "#StopTheTram march on Saturday from {street}",
    "Half my neighbours have #StopTheTram posters in the window",
    "Council ignores the #StopTheTram petition, surprise",
], tag_p=0.0)

topic("tram_general", "en", 22, [
    "Tram {tline} driver waved at my kid, made his day {emoji}",
    "Reading on the tram, missed my stop, classic",
    "The new trams have phone chargers!",
    "Tram {tline} packed with festival people",
    "Took the tram to {district} for the first time, lovely route",
    "Quiet tram this morning, everyone half asleep",
], tags=TRAM_TAGS_EN)

topic("tram_routes", "en", 8, [
    "New tram routes from June: line {tline} goes to {district}",
    "The tram routes map at {stop} is out of date",
    "Bus and tram routes change for the festival weekend",
], tags=TRAM_TAGS_EN)

topic("pickpocket_warning", "en", 6, [
    "Warning: pickpockets on tram {tline} again, keep bags closed",
    "Police warning about pickpockets at the ferry terminal",
    "Friendly warning, the cash machine at {stop} is broken",
])

topic("phone_theft", "en", 8, [
    "Phone stolen on tram {tline}, watch your bags",
    "Phone theft on the trams is getting bad",
    "My phone was stolen at {stop} in broad daylight",
    "Handbag stolen at the ferry terminal, police took a note",
])

# ===== English: bikes ======================================================

topic("bike_theft", "en", 16, [
    "My bike was stolen outside {street} last night {emoji}",
    "Bike stolen from the rack at {stop}. Third time this year.",
    "Someone stole my bike from {street}, red frame, basket, please share",
    "Lock cut, bike stolen, {street} again.",
    "Two bikes stolen from our courtyard in {district}",
    "If you see a green cargo bike for sale cheap, it is mine and it was stolen",
    "bike stolen at the ferry terminal while I was at work 🙃",
    "Got my stolen bike back!! Found it behind {street}",
    "Somebody nicked my wheels outside the gym on {street}",
], tags=BIKE_TAGS_EN)

topic("bike_theft_tag", "en", 12, [
    "Third one on {street} this month. Lock cut clean. #biketheft",
    "Check your locks folks, two gone from the {stop} rack last night #biketheft",
    "#biketheft again in {district}. Police shrug.",
    "Saw someone with bolt cutters at {stop} at 2am #biketheft",
    "Cargo frame, child seat, gone from {street} #biketheft {emoji}",
    "Insurance says six weeks. Walking till then #biketheft",
], tag_p=0.0)

topic("bike_share", "en", 18, [
    "QuillBike app crashed mid ride, fun",
    "Rent a QuillBike for the weekend, 12 per day, not bad",
    "The new e-bikes are fast, too fast {emoji}",
    "Bikes everywhere on the quay today",
    "Took a QuillBike to {district}, lovely ride",
    "Bikes on the ferry are free before 7, nice touch",
    "Who parks share bikes in the middle of the pavement",
], tags=BIKE_TAGS_EN)

topic("bike_dock_empty", "en", 6, [
    "@QuillBike the dock at {stop} is empty again, third day running",
    "@quillbike@social.example the {stop} dock has been empty since 7am",
    "Empty dock at {stop} again. @QuillBike any news?",
    "No bikes at the {stop} dock, every single morning @QuillBike",
], tag_p=0.0)

topic("bike_lane_closed", "en", 14, [
    "Bike lane on {street} closed for roadworks until June",
    "They are closing the bike lane by the quay for the festival",
    "Lane closed at {street}, cyclists squeezed in with the buses",
    "Bike lane closure on {street} again, no signs, no detour",
    "{street} bike lane: closed. Detour: none. Classic.",
    "Who decided to close the only bike lane to {district}?",
    "The bike lanes on {street} and {street2} are closed this week",
], tags=BIKE_TAGS_EN)

topic("cycle_route", "en", 12, [
    "New cycle route along the quay from {district} to {district2} is lovely",
    "Cycle route map for {district} is finally out {url}",
    "The coastal cycle route is closed at {street} after the storm",
    "Best cycle route to avoid the hill at Copperhill? asking for my knees",
    "Tried the new cycle route to Northmole, 20 minutes door to door",
    "Cycle routes in this city all end in a wall",
    "Signposted cycle route through {district} is a dream {emoji}",
], tags=BIKE_TAGS_EN)

topic("cycling_misc", "en", 8, [
    "Cycling race through {district} on Sunday, roads closed from 8",
    "Cycling in the rain builds character, or so I tell myself",
    "Cycling club meets at {stop} at 7, all welcome",
])

# ===== English: weather ====================================================

topic("storm_flood", "en", 14, [
    "Brine Row flooding again, water up to the doorsteps",
    "Street flooded outside the bakery on {street} {emoji}",
    "Flood water in the streets of {district}, don't drive",
    "Flooding on every street near the quay this morning",
    "Our street is a river. {street} fully flooded.",
    "The streets around {district} flood every time it rains this hard",
    "flooded street, flooded basement, great start to the week",
    "{street} closed due to flooding",
], tags=STORM_TAGS)

topic("tourists_flooded", "en", 6, [
    "The quay was flooded with tourists today, could not move",
    "Inbox flooded with festival emails",
    "Ropewalk flooded with cruise passengers again",
])

topic("roof_damage", "en", 12, [
    "Storm took half our roof off in {district}, roof damage everywhere",
    "Roofs damaged all along {street}, tiles in the road",
    "Roof damage on the school in {district}, kids home tomorrow",
    "So many damaged roof tiles on {street}, careful walking",
    "Our roof is damaged, the insurance line is busy for hours",
    "Damage to the roof of the ferry terminal, part of it closed",
    "Roofers booked for months after all the storm damage to roofs in {district}",
    "Half the tiles off our house after last night, tarp on till Friday",
], tags=STORM_TAGS)

topic("storm_damage", "en", 15, [
    "Trees down on {street} after last night's storm",
    "Storm knocked out the power in {district} {emoji}",
    "Boats damaged in the marina after the storm",
    "The storm ripped the awning off our cafe",
    "Fences down all over {district}, what a storm",
    "Storm cleanup on {street}, bring gloves if you can help",
], tags=STORM_TAGS)

topic("damaged_misc", "en", 6, [
    "Parcel arrived damaged, of course",
    "Phone screen damaged after one week, great",
    "Library copy came back damaged, not by me I swear",
])

topic("storm_warning", "en", 5, [
    "Storm warning for tonight: gusts up to {kmh} km/h, stay off the quay",
    "Official storm warning from 6pm, ferries may stop",
], tags=STORM_TAGS)

topic("storm_warning_tag", "en", 14, [
    "Wind 9 from the west tonight, bring the boats in #StormWarning",
    "Tie down the bins and the garden chairs, it's coming #stormwarning #storm2026",
    "Orange alert for the coast tonight #StormWarning",
    "Stay off the breakwater tonight please #stormwarning",
    "Shutters closed, candles ready, kids excited #StormWarning #storm2026",
    "Red alert from 9pm, do not go near the quay #StormWarning",
    "The sky over Northmole looks angry #stormwarning",
    "Gusts to {kmh} km/h expected after midnight #StormWarning",
], tag_p=0.0)

topic("tidewatch", "en", 5, [
    "@tidewatch@social.example reports gusts of {kmh} km/h at Northmole",
    "Gusts over 90 at the harbour mouth says @tidewatch",
    "@tidewatch gust map for tonight looks scary {url}",
    "Strongest gusts since 2019 according to @tidewatch@social.example",
], tag_p=0.0)

topic("high_tide", "en", 12, [
    "High tide at {time} tonight, Brine Row will be wet",
    "Spring high tide this weekend, move your car off the quay",
    "Watching the high tide come over the harbour wall {emoji}",
    "High tide plus west wind means Brine Row underwater",
    "What time is high tide tomorrow? Want to take the kayak out",
    "Record high tide, the water reached the market steps",
], tags=STORM_TAGS)

topic("high_tide_fest", "en", 14, [
    "#HighTideFest lineup is out and it's stacked {emoji}",
    "Tickets for #HighTideFest sold out in an hour, again",
    "Who's going to #HighTideFest this year?",
    "#HighTideFest day 2: sunburnt and happy",
    "Best set of the weekend at #HighTideFest, no contest",
    "Lost my voice at #HighTideFest {emoji}",
    "Camping at #HighTideFest, send coffee",
    "#HighTideFest wristband still on and it's Wednesday",
], tag_p=0.0)

topic("weather_nice", "en", 30, [
    "What a morning, not a cloud over {district} {emoji}",
    "Finally some sun, whole city on the quay",
    "Foggy start but the sun is winning",
    "Warmest {weekday} of the year, ice cream queue round the block",
    "Rainbow over Copperhill right now {emoji}",
    "Wind dropped, sea like a mirror",
], tags=GENERIC_TAGS["en"])

# ===== English: housing ====================================================

topic("univ_housing", "en", 12, [
    "University housing waiting list is nine months. Nine.",
    "Students sleeping on sofas because university housing is full",
    "Housing near the university costs more than my tuition",
    "University housing office says try again in September {emoji}",
    "New university housing block in Copperhill finally opening",
    "Anyone know a room near the university? Housing here is impossible",
    "The university promised housing for first years and then just didn't",
], tags=["#housingcrisis"])

topic("club_universe", "en", 18, [
    "House music all night at Club Universe {emoji}",
    "Universe has a deep house night on Friday, who's in",
    "Who's going to Universe for the house set?",
    "Club Universe, Saturday, house and disco till 4",
    "Lost my jacket at Universe last night, classic house night",
    "Best house DJ in town is at Universe tonight",
    "That house set at Club Universe was unreal",
], tag_p=0.0)

topic("universe_misc", "en", 6, [
    "The universe is telling me to stay in tonight",
    "What a universe of flavours at that new noodle place",
    "Universal truth: it rains when you forget the umbrella",
])

topic("housing_general", "en", 15, [
    "Viewing a flat in {district} tomorrow, fingers crossed 🤞",
    "Housing crisis meeting at the town hall tonight",
    "Forty people at one flat viewing, this city",
    "Landlords in {district} asking three months deposit now",
    "Social housing list closed for new names, unbelievable",
    "Found a flat!! Moving to {district} in May {emoji}",
], tags=["#housingcrisis"])

topic("rent_increase", "en", 14, [
    "Landlord increased my rent by {pct}% with two weeks notice",
    "Rents in {district} went up again, we're leaving",
    "Another rent increase letter today {emoji}",
    "Rent increased three times in two years, this is a joke",
    "Rents rising faster than the tide on Brine Row",
    "Our rent is going up {pct}% in May. Anyone else in {district}?",
    "The rent increase in Copperhill is pushing everyone out",
    "Landlord wants 200 more a month from June, on a mouldy flat",
], tags=["#housingcrisis"])

# ===== English: market =====================================================

topic("market_tag", "en", 30, [
    "#HarbourMarket is packed today {emoji}",
    "Best oysters in town, only at #harbourmarket",
    "Saturday plans: #HarbourMarketDay with the kids 👨‍👩‍👦",
    "#harbourmarketday haul: bread, cheese, way too many figs",
    "The fish lady at #HarbourMarket remembered my name {emoji}",
    "Early start at #Harbour_Market, the light is gorgeous",
    "Spent way too much at #HarbourMarket again",
    "Street food row at #harbourmarket is the best lunch in town",
    "Crab rolls at #HarbourMarket are back {emoji}",
    "Busking violinist at #harbourmarketday made my morning",
], tag_p=0.0)

topic("market_general", "en", 5, [
    "Lovely morning at the harbour market {emoji}",
    "The harbour market crowds are something else today",
    "Bought way too much cheese at the harbour market",
    "Harbour market on a sunny Saturday, nothing better",
], tags=["#shoplocal"])

topic("market_hours", "en", 8, [
    "The market opens at 6 on Saturdays now, who approved this",
    "Harbour market open from 7 till 1 today",
    "Market hours change next week: open till 2 on Sundays",
    "The market opens an hour later in winter, don't make my mistake",
    "Market open early tomorrow for the festival, 5am!",
], tags=["#shoplocal"])

topic("opening_hours_misc", "en", 8, [
    "Library opening hours are a mystery",
    "Pool opening hours extended for summer {emoji}",
    "Gallery opening hours changed again, check before you go",
    "Town hall opening hours: 9 to 12. Twelve!",
])

topic("market_stalls", "en", 10, [
    "New fish stalls at the harbour market today",
    "Market stalls along the quay were full by 8",
    "Half the market stalls shut early because of the wind",
    "Anyone know who runs the vegan market stalls on Saturdays?",
    "The flower market stalls are back {emoji}",
    "Market stalls for the festival: applications close Friday",
], tags=["#shoplocal"])

topic("marketing_stalled", "en", 14, [
    "City marketing campaign stalled again, surprise",
    "The marketing plan for the festival has stalled",
    "Marketing people stalled the new logo for a year",
    "Tram stalled, so I'm reading marketing emails on the platform",
    "Our marketing budget stalled in committee",
    "Stalled on my marketing essay, going for a walk",
], tag_p=0.0)

topic("market_prices", "en", 6, [
    "Fish prices at the harbour market went up again",
    "Prices at the market are wild this week, 9 for a loaf",
    "Harbour market prices vs the supermarket, no contest",
    "Fish prices down at the market after the good weather {emoji}",
], tags=["#shoplocal"])

# ===== English: festivals, concerts, authority =============================

topic("street_fest_tag", "en", 12, [
    "#StreetFestival tonight in Saltworks, brass bands everywhere",
    "#streetfestival food trucks are next level this year",
    "Face paint, churros, sore feet #StreetFestival {emoji}",
    "Bunting up on Capstan Row for the #streetfestival",
    "Dancing with strangers at the #StreetFestival, love this town",
    "Kids asleep in the pram at 10pm, worth it #streetfestival",
], tag_p=0.0)

topic("street_fest", "en", 4, [
    "The Saltworks street festival starts Friday, road closures from noon",
    "Street festival in Saltworks this weekend: music, food, chaos",
], tags=["#SaltworksFest"])

topic("festival_streets", "en", 5, [
    "The streets of Saltworks are full of music tonight {emoji}",
    "Streets in Saltworks closed to cars for the weekend party",
])

topic("organ_concert", "en", 10, [
    "Organ concert at Tidewell Chapel on Sunday, free entry",
    "The chapel organ concert last night gave me chills",
    "Organ concert tonight, the old pipes still sound amazing",
    "Tidewell Chapel's organ is restored, first concert in May",
    "Who played the organ at the concert on Friday? Incredible",
], tag_p=0.0)

topic("concert_organized", "en", 14, [
    "Concert was so badly organized, queued for an hour",
    "Big thanks to the organizers of the quay concert {emoji}",
    "Who organized this concert? Zero toilets",
    "Free concert organized by the rowing club tonight",
    "Concert organizers say the stage will be moved inside",
    "Well organized concert, great sound, home by 11",
], tag_p=0.0)

topic("harbour_authority", "en", 10, [
    "Harbour Authority doubles the mooring fee, thanks for nothing",
    "The harbour authority says the quay stays closed till Monday",
    "Letter from the harbour authority about my boat, again",
    "Harbour Authority meeting on the dredging plan tonight",
    "Harbour authority finally fixed the lights on the breakwater",
], tag_p=0.0)

topic("author_event", "en", 14, [
    "Local author reading at Harbour Books tonight",
    "Meet the author: harbour stories from Brine Row",
    "Authors' evening at the harbour library, 7pm",
    "Signed copy from my favourite author at the harbour bookshop {emoji}",
    "The author of that harbour ghost novel lives on my street",
], tag_p=0.0)

# ===== English: noise, lost property, cafe ==================================

topic("noise_tag", "en", 12, [
    "3am and the bar on Mizzen Yard is still blasting music #NoiseComplaint",
    "Ferry horns at 5am again #noisecomplaint",
    "Jackhammer since 7, on a Sunday. #NoiseComplaint",
    "Neighbour's drum practice, night four #NoiseComplaint {emoji}",
    "Seagull choir at dawn plus leaf blowers #noisecomplaint",
    "Party boat circling the bay till 2am #NoiseComplaint",
], tag_p=0.0)

topic("noise", "en", 12, [
    "So much noise from the building site on {street}",
    "The noise from the bars on Mizzen Yard is unreal tonight",
    "Is there any street in this city without construction noise?",
    "Earplugs are my best friend with this noise {emoji}",
], tags=["#sleepless"])

topic("noise_complaint", "en", 4, [
    "Filed a noise complaint with the city about the bar below us",
    "Third noise complaint this month and still nothing happens",
], tag_p=0.0)

topic("complaint_misc", "en", 6, [
    "My complaint about the broken streetlight got a form letter back",
    "The complaint desk at the town hall closes at noon??",
    "No complaint about the weather today for once",
])

topic("lost_keys", "en", 12, [
    "Lost a key on the {fline} this morning, blue keyring {emoji}",
    "Found a key by the market steps, handed it to the kiosk",
    "Lost my house key somewhere between {stop} and {district}",
    "Car key lost on tram {tline}, reward!",
    "Key with a little crab keyring found on the F2",
    "lost my keys at the harbour market, anyone?",
    "Spare key lost, landlord charging 80 to replace it",
], tags=LOST_TAGS_EN)

topic("lost_item", "en", 14, [
    "Lost my umbrella on tram {tline}, black with a duck handle",
    "Blue scarf lost on the {fline}, sentimental value",
    "Lost my phone at {stop}, please message me",
    "Lost a glove at the harbour market, the left one obviously",
    "Did anyone find a child's teddy on the {fline}? 🧸",
    "Found a pair of glasses on the {fline}, gave them to the crew",
], tags=LOST_TAGS_EN)

topic("lost_wallet", "en", 5, [
    "Lost my wallet on tram {tline}, brown leather, any luck anyone?",
    "Wallet found on tram {tline}, handed in at the depot",
    "Lost wallet at {stop} stop, cards already cancelled",
], tags=LOST_TAGS_EN)

topic("lost_wallet_tram4", "en", 2, [
    "Lost my wallet on tram 4 this morning, brown leather, anyone?",
    "Found a wallet on the 4 tram near Kelpgate, it's with the driver now",
], tag_p=0.0)

topic("lost_found_tag", "en", 24, [
    "Blue umbrella left on the {fline} this morning, now at the kiosk #lost_and_found",
    "Kid's scooter handed in at the {stop} depot #LostAndFound",
    "Grey scarf on the bench at {street}, hung it on the railing #lost_and_found",
    "Reading glasses in a red case, tram {tline}, ask the driver #LostAndFound",
    "Somebody's backpack at the pier office since Monday #lost_and_found",
    "A single baby shoe on {street}, tied to the lamppost #LostAndFound",
], tag_p=0.0)

topic("lost_pet", "en", 10, [
    "Lost cat near Ropewalk, grey tabby called Pip, please share",
    "Our cat has been missing since Tuesday, {district}, ginger, very shy",
    "LOST CAT: black with white paws, last seen on {street}",
    "Lost cat found!! Thank you everyone {emoji}",
    "Has anyone seen a lost cat around {stop}? Tortoiseshell, bell on the collar",
], tag_p=0.0)

topic("lost_cat_band", "en", 20, [
    "#LostCatOrchestra closing the main stage tonight!!",
    "New single from #LostCatOrchestra is on repeat {emoji}",
    "#LostCatOrchestra at the Saltworks warehouse on Friday",
    "Saw #LostCatOrchestra in a tiny bar before they were famous",
    "#LostCatOrchestra tickets gone in five minutes",
    "Humming #LostCatOrchestra on the tram like a weirdo",
], tag_p=0.0)

topic("cafe", "en", 10, [
    "Brunch at the little cafe on {street}, best pancakes in town",
    "cafe brunch with the crew {emoji}",
    "New cafe in {district} does brunch till 3",
    "Is the cafe by the pier still doing brunch on Sundays?",
    "Sunday brunch at the corner cafe, bottomless coffee",
    "Café brunch in {district} again, no regrets",
], tag_p=0.0)

topic("brunch_misc", "en", 5, [
    "Brunch at home today, too rainy to go out",
    "Made brunch for eight, never again",
])

topic("cafe_wifi", "en", 5, [
    "Café Marlin has the fastest wifi in town, working from there today",
    "Best café to work from in {district}? Need sockets",
])

# ===== English: code-switched ==============================================

topic("cs_ferry_lleno", "es", 8, [
    "The ferry está lleno otra vez, waited 40 minutos",
    "Ferry lleno, no seats, standing with my bici",
    "Why is the {fline} ferry always lleno on Mondays",
    "ferry completamente lleno, I give up",
    "El ferry de las 8 is so full, lleno lleno",
], langs=("es", "en"), tag_p=0.0, declare_p=0.1)

topic("cs_pescado", "es", 6, [
    "pescado fresco at the harbour market today, so good",
    "Best pescado fresco in town is at the market, trust me",
    "the market has pescado fresco on Tuesdays, dime si quieres",
    "Compré pescado fresco at the market, grilling tonight {emoji}",
], langs=("es", "en"), tag_p=0.0, declare_p=0.1)

topic("cs_tram_kaputt", "de", 8, [
    "Tram kaputt again, walking to work 🙄",
    "the tram is schon wieder kaputt",
    "Tram {tline} kaputt, classic Monday",
    "Tram kaputt, Fahrrad kaputt, me kaputt",
    "Tram kaputt und it's raining, perfect",
], langs=("de", "en"), tag_p=0.0, declare_p=0.1)

topic("cs_fiets", "nl", 7, [
    "my fiets got gestolen at the station, great start",
    "Fiets gestolen outside the ferry terminal, again",
    "third fiets gestolen this year, I'm done",
    "Someone's fiets gestolen in front of the bar lol",
], langs=("nl", "en"), tag_p=0.0, declare_p=0.1)

# ===== German ================================================================

FERRY_TAGS_DE = ["#QuillFerries", "#Pendeln", "#Fähre"]

topic("ferry_delay", "de", 16, [
    "Fähren heute wieder mit Verspätungen {emoji}",
    "{min} Minuten Verspätung auf der {fline}, mal wieder",
    "Die Fähren nach Gullstone haben ewig Verspätung",
    "Verspätungen bei allen Fähren wegen {cause}",
    "Schon wieder Verspätungen, die Fähren stehen in {pier}",
    "Alle Fähren verspätet, danke für nichts {opmention}",
    "Warum haben die Fähren jeden Morgen Verspätungen?",
    "Fähre nach Tidewell mit {min} Minuten Verspätung",
], tags=FERRY_TAGS_DE)

topic("ferry_general", "de", 20, [
    "Mit der Fähre nach Gullstone zum Mittagessen {emoji}",
    "Sonnenuntergang von der Fähre aus, unbezahlbar",
    "Die neue Fähre ist so leise",
    "Fähre voller Schulklassen heute morgen",
    "Delfine neben der Fähre!!",
], tags=FERRY_TAGS_DE)

topic("tram_delay", "de", 10, [
    "Verspätung bei der Tram {tline}, wie immer",
    "Straßenbahn {tline} hat wieder Verspätung",
    "Tram {tline} mit {min} Minuten Verspätung in {stop}",
], tags=["#Tram"])

topic("tram_general", "de", 12, [
    "Tram {tline} heute voller Touristen",
    "In der Tram eingeschlafen und bis {stop} gefahren",
    "Die neuen Trams haben USB-Anschlüsse!",
    "Neuer Fahrplan für die Tram ab Juni",
], tags=["#Tram"])

topic("bike_theft", "de", 12, [
    "Zwei Fahrräder aus unserem Hof in {district} geklaut",
    "Fahrräder am {stop} gestohlen, das dritte Mal diesen Monat",
    "Mein Rad wurde am Fähranleger gestohlen {emoji}",
    "Schon wieder Fahrräder weg in der {street}",
    "Wer kauft eigentlich die ganzen gestohlenen Fahrräder?",
    "Fahrrad gestohlen vor dem Bahnhof, rotes Damenrad",
    "Die Fahrräder meiner Kinder wurden gestohlen",
], tags=["#Fahrrad"])

topic("phone_theft", "de", 5, [
    "Handy in der Tram {tline} gestohlen, passt auf eure Taschen auf",
    "Portemonnaie am Hafen gestohlen, Polizei kommt",
])

topic("bike_general", "de", 10, [
    "Mit dem Fahrrad zur Arbeit bei dem Wetter, mutig",
    "Neues Fahrrad! Endlich keine Tram mehr {emoji}",
    "Fahrrad geputzt, Sonne scheint, herrlich",
], tags=["#Fahrrad"])

topic("rent_de", "de", 12, [
    "Die Mieten in {district} steigen schon wieder",
    "Wohnungen unter 1000 Euro? Keine Chance in Quillhaven",
    "Drei Wohnungen besichtigt, alle Mieten über dem Limit",
    "Unsere Miete steigt ab Mai um {pct} Prozent",
    "Wer hat noch bezahlbare Wohnungen gesehen? Mieten sind absurd",
    "Mieterhöhung Nummer drei, ich ziehe aus",
    "Wohnung in {district} gefunden! Miete geht so {emoji}",
], tags=["#Wohnungsnot"])

topic("faehre_fahrplan", "de", 10, [
    "Neuer Fahrplan fuer die Faehre nach Gullstone?",
    "Faehre Fahrplan geaendert, weiss jemand mehr?",
    "Wo finde ich den Fahrplan der Fahre nach Tidewell",
    "Fahrplan Faehre ab Montag: alle 20 Minuten",
    "Die Fahre faehrt ab Mai nach neuem Fahrplan",
    "Sommerfahrplan der Faehre ist online {url}",
    "Fähre Fahrplan für Sonntag?",
], tag_p=0.0)

topic("market_de", "de", 12, [
    "Samstag auf dem Hafenmarkt, Fischbrötchen und Sonne {emoji}",
    "Der Hafenmarkt ist heute brechend voll",
    "Frischer Fisch vom Hafenmarkt, heute gibt es Scholle",
    "Am Hafenmarkt gibt es jetzt einen Käsestand",
], tags=["#HarbourMarket", "#Hafenmarkt"])

topic("storm_de", "de", 12, [
    "Sturm heute Nacht, Bäume auf der {street}",
    "Stromausfall in {district} nach dem Sturm {emoji}",
    "Sturmwarnung für heute Abend, alles festbinden",
    "Dach beschädigt, Sturm hat Ziegel mitgenommen",
], tags=STORM_TAGS)

topic("keller_flood", "de", 8, [
    "Keller unter Wasser nach dem Sturm",
    "Unser Keller steht schon wieder unter Wasser {emoji}",
    "Wasser im Keller, die ganze {street} betroffen",
    "Alle Keller in {district} unter Wasser, Feuerwehr pumpt",
    "Kellerflut in Brine Row, Gummistiefel an",
    "Wer hat eine Pumpe? Keller voll Wasser",
], tags=STORM_TAGS)

topic("noise_de", "de", 8, [
    "Baustellenlärm seit 7 Uhr, an einem Samstag",
    "Die Bars in Mizzen Yard sind viel zu laut",
    "Lärm vom Hafen die ganze Nacht, ich brauche Schlaf",
], tags=["#NoiseComplaint"])

topic("festival_de", "de", 10, [
    "#HighTideFest war der Wahnsinn {emoji}",
    "Karten für das Hafenfest gekauft!",
    "Straßenfest in Saltworks, überall Musik",
    "Das Festival am Wochenende war großartig, bin noch heiser",
    "Musik bis 2 Uhr, meine Nachbarn lieben mich",
], tag_p=0.0)

topic("heating_kaputt", "de", 5, [
    "Heizung kaputt, mitten im Februar",
    "Waschmaschine kaputt, Wochenende gerettet",
])

# ===== French ================================================================

topic("ferry_delay", "fr", 14, [
    "Navettes en retard ce matin, merci {cause}",
    "Encore des retards sur la navette {fline}",
    "Navette retardée de {min} minutes, classique",
    "Toutes les navettes ont du retard aujourd'hui",
    "Les retards de la navette vers Gullstone, c'est tous les jours",
    "{min} minutes de retard pour la navette de {time}",
    "Navettes retardées à cause {cause}",
], tags=["#QuillFerries", "#navette"])

topic("ferry_cancel_short", "fr", 10, [
    "navette annulée", "Navettes annulées !", "navette annulée {emoji}",
    "navettes annulées", "traversée annulée", "Navette supprimée",
], tag_p=0.0, two_word=True, declare_p=0.08)

topic("ferry_cancel", "fr", 6, [
    "Toutes les navettes annulées cet après-midi à cause {cause}",
    "La navette de {time} est annulée, personne ne prévient jamais",
    "Traversées annulées jusqu'à 15h, bonne journée",
], tags=["#QuillFerries"])

topic("ferry_general", "fr", 14, [
    "Coucher de soleil depuis la navette {emoji}",
    "La navette pour Gullstone, meilleur trajet de la ville",
    "Des dauphins à côté de la navette ce matin !",
    "La navette du matin, mon café, ma musique",
], tags=["#navette"])

topic("tram_delay", "fr", 8, [
    "Le tram {tline} a du retard, encore",
    "Retard sur toutes les lignes de tram ce matin",
    "Tram {tline} en retard, je vais rater mon train",
], tags=["#tram"])

topic("quai_flood", "fr", 10, [
    "Le quai de Brine Row est encore sous l'eau, inondation totale",
    "Inondation sur le quai ce matin, impossible de passer",
    "Rue du quai inondée après la tempête {emoji}",
    "Les caves près du quai sont inondées",
    "Inondations sur le quai nord cette nuit",
    "Le quai est inondé, encore",
    "Caves inondées, quai fermé, belle semaine",
], tags=STORM_TAGS)

topic("quai_misc", "fr", 8, [
    "Rendez-vous sur le quai à 18h pour l'apéro",
    "Le quai au coucher du soleil {emoji}",
    "Nouveau banc sur le quai, merci la mairie",
])

topic("inonde_tourists", "fr", 4, [
    "Le marché inondé de touristes ce matin",
    "Mon téléphone inondé de notifications, au secours",
])

topic("fete_port_tag", "fr", 12, [
    "Ce soir feu d'artifice #FêteDuPort {emoji}",
    "Trop de monde à la #fêteduport cette année",
    "Les bateaux décorés pour la #FêteDuPort sont magnifiques",
    "Concert gratuit samedi pour la #FêteDuPort",
    "Les enfants adorent la #FêteDuPort, les manèges surtout",
    "Vivement la #fêteduport, on réserve une table ?",
], tag_p=0.0)

topic("fete_port", "fr", 3, [
    "La fête du port commence vendredi soir, programme en ligne {url}",
    "Fête du port : fermeture des quais à 18h",
], tag_p=0.0)

topic("marche_port", "fr", 10, [
    "Le marché du port ouvre à 7h le samedi",
    "Au marché du port, les huîtres sont à 9 euros la douzaine",
    "Marché du port ce matin, trop de monde {emoji}",
    "Les poissonniers du marché du port sont en grève demain",
    "Je fais tout mon marché au port le dimanche",
], tags=["#HarbourMarket"])

topic("marche_verb", "fr", 16, [
    "J'adore marcher le long du port le soir",
    "La borne vélo du port ne marche plus",
    "On marche jusqu'au port ?",
    "Ça marche, rendez-vous au port à 19h",
    "Le distributeur du port ne marche jamais",
    "Marcher du port à Tidewell prend 40 minutes",
    "Mon téléphone ne marche plus depuis la pluie au port",
], tag_p=0.0)

topic("fete_quartier", "fr", 8, [
    "fete de quartier a Ropewalk samedi, venez nombreux",
    "La fete de quartier de Saltworks est reportee",
    "Fete de quartier ce week-end, on cherche des benevoles",
    "Super fete de quartier hier soir, merci les voisins",
    "La fête de quartier commence à 15h",
], tag_p=0.0)

topic("bike_theft", "fr", 8, [
    "On m'a volé mon vélo devant la gare",
    "Vélos volés à Kelpgate, faites attention",
    "Deuxième vélo volé cette année, j'abandonne",
], tags=["#vélo"])

topic("storm_fr", "fr", 10, [
    "Tempête cette nuit, des arbres partout sur {street}",
    "Alerte tempête ce soir, rentrez les chaises",
    "Toit abîmé par la tempête, super",
], tags=STORM_TAGS)

topic("festival_fr", "fr", 8, [
    "#HighTideFest c'était incroyable {emoji}",
    "Billets pour le festival achetés !",
    "Le festival ce week-end, trois jours de musique",
    "Encore des paillettes partout après le festival",
], tag_p=0.0)

# ===== Spanish ==============================================================

topic("ferry_delay", "es", 12, [
    "Barcos retrasados otra vez, {min} minutos en el muelle",
    "Retrasos en todos los barcos por {cause}",
    "El barco de las {time} va con retraso",
    "¿Por qué los barcos siempre salen retrasados?",
    "Otro día, otro retraso. Barcos a Gullstone parados",
    "Los retrasos de los barcos ya son costumbre",
], tags=["#QuillFerries"])

topic("barco_general", "es", 12, [
    "Atardecer desde el barco a Gullstone {emoji}",
    "El barco de la mañana es mi momento de paz",
    "Delfines junto al barco, ¡qué suerte!",
], tags=["#QuillFerries"])

topic("tram_delay", "es", 6, [
    "El tranvía {tline} con retraso otra vez",
    "Retraso en todas las líneas de tranvía",
], tags=["#tranvía"])

topic("bike_theft", "es", 12, [
    "Me robaron la bicicleta en {street} anoche {emoji}",
    "Bicicletas robadas en el muelle, ojo con los candados",
    "Dos bicicletas robadas en nuestro portal",
    "Mi bici robada apareció en un anuncio, increíble",
    "Roban bicicletas cada noche en {district}",
    "Bicicleta robada en la parada del tranvía, roja con cesta",
], tags=["#bici"])

topic("bike_general", "es", 6, [
    "A trabajar en bicicleta con este sol, qué gusto",
    "Nueva bicicleta, nueva vida {emoji}",
], tags=["#bici"])

topic("port_closed", "es", 8, [
    "Puerto cerrado por el temporal, ningún barco sale hoy",
    "El puerto sigue cerrado, dicen que hasta el lunes",
    "Puerto cerrado otra vez {emoji}",
    "Con el puerto cerrado no hay pescado en el mercado",
    "¿Alguien sabe si el puerto está cerrado mañana?",
], tags=STORM_TAGS)

topic("door_es", "es", 16, [
    "La puerta del tranvía cerrada otra vez, nadie puede bajar",
    "Puerta cerrada en la estación de Kelpgate, ¿en serio?",
    "Se quedó la puerta del tranvía cerrada y el conductor ni se enteró",
    "La puerta trasera del tranvía {tline} siempre está cerrada",
    "Puerta del edificio cerrada y yo sin llaves",
    "Otra vez la puerta cerrada del mercado a las 8",
], tag_p=0.0)

topic("market_tag", "es", 12, [
    "#mercadodelpuerto hoy a tope {emoji}",
    "Los mejores calamares de la ciudad en #MercadoDelPuerto",
    "Sábado de #mercadodelpuerto con la familia",
    "Compré queso y pan en #mercadodelpuerto, todo buenísimo",
    "Música en directo en #MercadoDelPuerto esta mañana",
], tag_p=0.0)

topic("market_es", "es", 4, [
    "El mercado del puerto abre a las 7 los sábados",
    "Mucha gente hoy en el mercado del puerto",
], tags=["#HarbourMarket"])

topic("info_tranvia", "es", 8, [
    "alguien tiene informacion sobre el tranvia {tline}?",
    "Informacion del tranvia: cambios desde el lunes",
    "No hay informacion en la parada del tranvia, como siempre",
    "Donde encuentro informacion del tranvia nocturno?",
    "Información del tranvía actualizada {url}",
], tag_p=0.0)

topic("tram_general", "es", 10, [
    "El tranvía {tline} lleno de turistas hoy",
    "Me dormí en el tranvía y acabé en {stop}",
    "Los tranvías nuevos tienen cargadores, por fin",
], tags=["#tranvía"])

topic("info_misc", "es", 5, [
    "Más información sobre el festival en la web {url}",
    "Información útil: la biblioteca cierra en agosto",
])

topic("tram_short", "es", 10, [
    "tranvía averiado", "Tranvías averiados {emoji}", "tranvías averiados",
    "Tranvía averiado.", "tranvía averiado!!", "tranvías parados",
], tag_p=0.0, two_word=True, declare_p=0.08)

topic("tram_broken", "es", 4, [
    "El tranvía {tline} averiado en {stop}, vamos andando",
    "Otra vez el tranvía averiado a la hora punta",
], tags=["#tranvía"])

topic("storm_es", "es", 8, [
    "Temporal esta noche, recoged las terrazas",
    "Árboles caídos en {street} por el temporal",
], tags=STORM_TAGS)

# ===== Italian ==============================================================

topic("ferry_delay", "it", 12, [
    "Traghetti in ritardo anche oggi {emoji}",
    "Ritardi su tutti i traghetti per {cause}",
    "Il traghetto delle {time} è in ritardo di {min} minuti",
    "Ancora ritardi sul traghetto {fline}",
    "Traghetti ritardati, nessuno sa niente",
    "Ogni mattina i traghetti partono con mezz'ora di ritardo",
], tags=["#QuillFerries"])

topic("traghetto_general", "it", 10, [
    "Tramonto dal traghetto per Gullstone {emoji}",
    "Il traghetto del mattino è il mio momento preferito",
    "Delfini vicino al traghetto stamattina!",
], tags=["#QuillFerries"])

topic("bike_theft", "it", 10, [
    "Mi hanno rubato la bicicletta davanti al porto",
    "Biciclette rubate in {street}, attenzione",
    "Due biciclette rubate dal cortile stanotte",
    "Bicicletta rubata alla fermata del tram, rossa con cestino",
    "Rubano biciclette ogni notte a {district}",
], tags=["#bici"])

topic("port_closed", "it", 8, [
    "Porto chiuso per la mareggiata, niente traghetti oggi",
    "Il porto resta chiuso fino a lunedì",
    "Porto chiuso di nuovo {emoji}",
    "Qualcuno sa se il porto è chiuso domani?",
], tags=STORM_TAGS)

topic("door_it", "it", 14, [
    "La porta del tram chiusa di nuovo, nessuno scende",
    "Porta chiusa alla fermata, ma dai",
    "La porta posteriore del tram {tline} è sempre chiusa",
    "Porta del palazzo chiusa e io senza chiavi",
    "Il tram riparte con la porta chiusa in faccia",
], tag_p=0.0)

topic("market_tag", "it", 10, [
    "#MercatoDelPorto stamattina pienissimo {emoji}",
    "Le migliori acciughe della città al #MercatoDelPorto",
    "Sabato di #mercatodelporto con i bambini",
    "Formaggi e pane al #MercatoDelPorto, tutto buonissimo",
], tag_p=0.0)

topic("market_it", "it", 3, [
    "Il mercato del porto apre alle 7 il sabato",
    "Tanta gente al mercato del porto oggi",
], tags=["#HarbourMarket"])

topic("tram_short", "it", 8, [
    "tram bloccati", "Tram bloccato {emoji}", "tram bloccati!!", "Tram bloccati.", "tram bloccato",
], tag_p=0.0, two_word=True, declare_p=0.08)

topic("tram_broken", "it", 3, [
    "Tutti i tram bloccati in centro per un guasto",
    "Tram {tline} bloccato a {stop}, si va a piedi",
], tags=["#tram"])

topic("tram_general", "it", 8, [
    "Il tram {tline} pieno di turisti oggi",
    "Mi sono addormentato sul tram e sono finito a {stop}",
], tags=["#tram"])

topic("storm_it", "it", 8, [
    "Mareggiata stanotte, alberi caduti in {street}",
    "Allerta meteo stasera, legate tutto",
], tags=STORM_TAGS)

# ===== Portuguese ===========================================================

topic("ferry_delay", "pt", 12, [
    "Barcos atrasados outra vez, {min} minutos no cais",
    "Atrasos em todos os barcos por causa {cause}",
    "O barco das {time} está com atraso",
    "Porque é que os barcos saem sempre atrasados?",
    "Mais um dia de atrasos nos barcos para Gullstone",
], tags=["#QuillFerries"])

topic("barco_general", "pt", 10, [
    "Pôr do sol no barco para Gullstone {emoji}",
    "O barco da manhã é o meu momento de paz",
    "Golfinhos ao lado do barco hoje!",
], tags=["#QuillFerries"])

topic("lost_keys", "pt", 10, [
    "Perdi as chaves no elétrico {tline} {emoji}",
    "Chaves perdidas perto do cais, porta-chaves azul",
    "Alguém encontrou umas chaves no barco das {time}?",
    "Chave perdida na feira, dou recompensa",
    "Perdi a chave de casa entre {stop} e {district}",
], tags=["#perdidos"])

topic("port_closed", "pt", 8, [
    "Porto fechado por causa da tempestade, nenhum barco sai",
    "O porto continua fechado hoje",
    "Porto fechado outra vez {emoji}",
    "Alguém sabe se o porto está fechado amanhã?",
], tags=STORM_TAGS)

topic("door_pt", "pt", 14, [
    "A porta do elétrico fechada outra vez, ninguém sai",
    "Porta fechada na paragem, a sério?",
    "A porta traseira do elétrico {tline} está sempre fechada",
    "Porta do prédio fechada e eu sem chaves",
    "O elétrico arrancou com a porta fechada na minha cara",
], tag_p=0.0)

topic("market_tag", "pt", 10, [
    "#FeiraDoPorto hoje cheia {emoji}",
    "As melhores sardinhas da cidade na #FeiraDoPorto",
    "Sábado de #feiradoporto com os miúdos",
    "Queijo e pão da #FeiraDoPorto, tudo ótimo",
], tag_p=0.0)

topic("market_pt", "pt", 3, [
    "A feira do porto abre às 7 ao sábado",
    "Muita gente hoje na feira do porto",
], tags=["#HarbourMarket"])

topic("acao_limpeza", "pt", 8, [
    "acao de limpeza na praia sabado as 10h, tragam luvas",
    "Grande acao de limpeza no cais depois da tempestade",
    "Alguem vem a acao de limpeza em Eelbrook?",
    "Obrigado a todos na acao de limpeza de ontem",
    "Ação de limpeza no domingo de manhã",
], tag_p=0.0)

topic("limpeza_misc", "pt", 5, [
    "Limpeza das ruas às 6 da manhã, que barulho",
    "Dia de limpeza em casa, chuva lá fora",
])

topic("tram_short", "pt", 8, [
    "elétrico avariado", "Elétricos avariados {emoji}", "elétricos avariados", "Elétrico avariado.",
    "elétricos parados",
], tag_p=0.0, two_word=True, declare_p=0.08)

topic("tram_broken", "pt", 3, [
    "O elétrico {tline} avariado em {stop}, vamos a pé",
    "Outra vez elétrico avariado na hora de ponta",
], tags=["#elétrico"])

topic("tram_general", "pt", 8, [
    "O elétrico {tline} cheio de turistas hoje",
    "Adormeci no elétrico e acabei em {stop}",
], tags=["#elétrico"])

# ===== Dutch ================================================================

topic("ferry_delay", "nl", 12, [
    "Veerboten weer vertraagd, {min} minuten wachten",
    "Vertragingen bij alle veerboten door {cause}",
    "De veerboot van {time} heeft vertraging",
    "Waarom hebben de veerboten elke ochtend vertragingen?",
    "Weer vertragingen op de {fline}, de veerboten liggen stil",
], tags=["#QuillFerries"])

topic("veerboot_general", "nl", 10, [
    "Zonsondergang vanaf de veerboot {emoji}",
    "De veerboot naar Gullstone, beste twaalf minuten van de dag",
    "Dolfijnen naast de veerboot vanochtend!",
], tags=["#QuillFerries"])

topic("bike_path", "nl", 10, [
    "Fietspaden langs de kade afgesloten tot juni",
    "Het fietspad bij {street} is weer afgesloten",
    "Waarom zijn alle fietspaden in {district} afgesloten?",
    "Fietspaden afgesloten voor het festival, omrijden dus",
    "Afgesloten fietspaden, geen omleiding, typisch",
], tags=["#fiets"])

topic("bike_general", "nl", 10, [
    "Met de fiets naar het werk in de zon, heerlijk",
    "Nieuwe fiets! Eindelijk geen tram meer {emoji}",
    "Fietsen langs de kade is het mooiste wat er is",
], tags=["#fiets"])

topic("ferry_cancel_short", "nl", 8, [
    "veerboot uitgevallen", "Veerboten uitgevallen {emoji}", "veerboot uitgevallen!!", "Veerboot uitgevallen.",
    "veerboten uitgevallen",
], tag_p=0.0, two_word=True, declare_p=0.08)

topic("ferry_cancel", "nl", 3, [
    "De veerboot van {time} is uitgevallen door {cause}",
    "Alle afvaarten uitgevallen vanmiddag, fijne dag",
], tags=["#QuillFerries"])

topic("storm_nl", "nl", 8, [
    "Storm vannacht, bomen om op de {street}",
    "Code oranje vanavond, alles vastbinden",
], tags=STORM_TAGS)

# ---------------------------------------------------------------------------
# Fillers: everyday posts about nothing any query asks for. They give the
# index realistic vocabulary and document frequencies.
# ---------------------------------------------------------------------------

FILLERS = {
    "en": [
        "Coffee first, then the world {emoji}",
        "Seagull stole my {food} right out of my hand. Respect.",
        "Best {food} in {district}, don't @ me",
        "Sunrise over the bay this morning {emoji}",
        "Rowing club at 6am, why do I do this to myself",
        "Anyone up for a swim at Northmole later?",
        "Kids made a sandcastle bigger than the dog",
        "{weekday} mood: blanket, tea, rain on the window",
        "New bakery on {street}, the queue is worth it",
        "Football in the park tonight, bring a ball",
        "Fog so thick I can't see the lighthouse",
        "Free jazz in the square tonight {emoji}",
        "My neighbour's dog learned to open the gate",
        "Working from the library today, so quiet",
        "The lighthouse looks unreal in this light {flag}",
        "Painted the kitchen yellow, no regrets",
        "Overheard on {street}: 'the sea is just big soup'",
        "Gym at lunch, {food} after. Balance.",
        "Happy birthday to my favourite human {emoji}",
        "Just moved here from up north, loving it so far {flag}",
        "Can someone explain why the gulls scream at 4am",
        "Low sun, long shadows, {district} glowing {emoji}",
        "Finished my first 10k along the seafront!!",
        "Swapping books at the little free library on {street}",
        "Pub quiz in {district}, we came last, again",
        "Got caught in the rain without a jacket. Classic {weekday}",
        "Ice cream at 9am is a valid life choice",
        "The old harbour crane is getting a fresh coat of paint",
        "Grandma turned 90 today and still beats me at cards {emoji}",
        "Just saw a seal in the marina!!",
        "Made {food} for the whole office, gone in five minutes",
        "Walked the dog along the beach at Eelbrook, she found a crab {emoji}",
        "{district} smells like fresh bread every morning, I'm not moving",
        "Choir practice in {district} tonight, we sound almost good",
        "First swim of the year. Cold. Very cold. {emoji}",
        "Hot chocolate and a window seat in {district}",
        "Someone on {street} plays the trumpet every evening at {time}, I love it",
        "Community garden in {district} has tomatoes already",
        "Sketching boats at the marina, trying to get better at hands",
        "Learning to knit, made a very long rectangle",
        "Rooftop yoga in {district}, gulls judging my poses",
        "Found the best view in {district}: top of the steps at {street}",
        "Started a book club, we mostly eat {food}",
    ],
    "de": [
        "Erstmal Kaffee {emoji}",
        "Eine Möwe hat mein {food} geklaut. Respekt.",
        "Bestes {food} in {district}, keine Diskussion",
        "Sonnenaufgang über der Bucht heute {emoji}",
        "{weekday}, Regen, Tee, Decke. Perfekt.",
        "Neue Bäckerei in der {street}, die Schlange lohnt sich",
        "Nebel so dick, dass man den Leuchtturm nicht sieht",
        "Heute im Büro, morgen wieder Homeoffice",
        "Schwimmen in Northmole, wer kommt mit?",
        "Gerade aus dem Süden hergezogen, gefällt mir sehr {flag}",
        "Der Hund vom Nachbarn kann jetzt das Tor öffnen",
        "Joggen an der Promenade, 10 km geschafft!",
        "Pubquiz in {district}, wir waren wieder Letzte",
        "Bücherschrank in der {street} ist voll mit Krimis",
        "Oma wird heute 90 und gewinnt immer noch beim Kartenspielen",
        "Der alte Kran wird neu gestrichen",
        "Eis um 9 Uhr morgens ist eine legitime Entscheidung {emoji}",
        "Robbe im Yachthafen gesehen!!",
        "Küche gelb gestrichen, keine Reue",
        "Gute Nacht aus {district} {emoji}",
        "{food} für das ganze Büro gemacht, nach fünf Minuten weg",
        "Mit dem Hund am Strand von Eelbrook, sie hat eine Krabbe gefunden {emoji}",
        "In {district} riecht es jeden Morgen nach frischem Brot",
        "Chorprobe in {district} heute, klingt fast gut",
        "Erstes Mal schwimmen dieses Jahr. Kalt. Sehr kalt.",
        "Heiße Schokolade und ein Fensterplatz in {district}",
        "Gemeinschaftsgarten in {district} hat schon Tomaten",
        "Stricken gelernt, ein sehr langes Rechteck ist es geworden",
        "Yoga auf dem Dach in {district}, die Möwen schauen zu",
    ],
    "fr": [
        "D'abord un café {emoji}",
        "Une mouette m'a piqué {food}. Respect.",
        "Meilleur endroit pour {food} à {district}",
        "Lever de soleil sur la baie ce matin {emoji}",
        "{weekday}, pluie, thé, plaid. Parfait.",
        "Nouvelle boulangerie rue {street}, la queue vaut le coup",
        "Brouillard tellement épais qu'on ne voit plus le phare",
        "Télétravail à la bibliothèque aujourd'hui",
        "Baignade à Northmole, qui vient ?",
        "Arrivée du sud il y a un mois, j'adore déjà {flag}",
        "Le chien du voisin sait ouvrir le portail maintenant",
        "Premier 10 km le long de la mer !",
        "Quiz au bar de {district}, on a fini derniers",
        "Mamie a 90 ans aujourd'hui {emoji}",
        "Un phoque dans la marina !!",
        "Glace à 9h du matin, aucun regret",
        "Bonne nuit depuis {district} {emoji}",
        "La vieille grue va être repeinte",
        "Fait {food} pour tout le bureau, disparu en cinq minutes",
        "Balade avec le chien sur la plage d'Eelbrook {emoji}",
        "{district} sent le pain chaud tous les matins",
        "Répétition de la chorale à {district} ce soir",
        "Première baignade de l'année. Froide. Très froide.",
        "Chocolat chaud et place à la fenêtre à {district}",
        "Jardin partagé de {district}, déjà des tomates",
        "J'apprends à tricoter, j'ai fait un très long rectangle",
    ],
    "es": [
        "Primero café {emoji}",
        "Una gaviota me robó {food}. Respeto.",
        "El mejor sitio para {food} en {district}, sin discusión",
        "Amanecer sobre la bahía esta mañana {emoji}",
        "{weekday}, lluvia, té y manta. Perfecto.",
        "Nueva panadería en {street}, la cola merece la pena",
        "Niebla tan espesa que no se ve el faro",
        "Teletrabajo desde la biblioteca hoy",
        "¿Alguien se apunta a nadar en Northmole?",
        "Recién llegada del sur, me encanta esto {flag}",
        "El perro del vecino ya sabe abrir la puerta del jardín",
        "¡Mis primeros 10 km por el paseo marítimo!",
        "Quiz en {district}, quedamos últimos otra vez",
        "La abuela cumple 90 hoy {emoji}",
        "¡Una foca en la marina!",
        "Helado a las 9 de la mañana, sin arrepentimientos",
        "Buenas noches desde {district} {emoji}",
        "Hice {food} para toda la oficina, no duró ni cinco minutos",
        "Paseo con el perro por la playa de Eelbrook {emoji}",
        "{district} huele a pan recién hecho cada mañana",
        "Ensayo del coro en {district} esta tarde",
        "Primer baño del año. Fría. Muy fría.",
        "Chocolate caliente y sitio junto a la ventana en {district}",
        "El huerto comunitario de {district} ya tiene tomates",
    ],
    "it": [
        "Prima il caffè {emoji}",
        "Un gabbiano mi ha rubato {food}. Rispetto.",
        "Il posto migliore per {food} a {district}, punto",
        "Alba sulla baia stamattina {emoji}",
        "{weekday}, pioggia, tè e coperta. Perfetto.",
        "Nuovo forno in {street}, la fila vale la pena",
        "Nebbia così fitta che non si vede il faro",
        "Lavoro dalla biblioteca oggi",
        "Qualcuno viene a nuotare a Northmole?",
        "Appena arrivata dal sud, mi piace tantissimo {flag}",
        "La nonna compie 90 anni oggi {emoji}",
        "Una foca nel porticciolo!!",
        "Gelato alle 9 di mattina, nessun rimpianto",
        "Buonanotte da {district} {emoji}",
        "Passeggiata col cane sulla spiaggia di Eelbrook {emoji}",
        "{district} profuma di pane ogni mattina",
        "Prove del coro a {district} stasera",
        "Primo bagno dell'anno. Fredda. Freddissima.",
        "Cioccolata calda e posto vicino alla finestra a {district}",
        "L'orto condiviso di {district} ha già i pomodori",
    ],
    "pt": [
        "Primeiro o café {emoji}",
        "Uma gaivota roubou-me {food}. Respeito.",
        "O melhor sítio para {food} em {district}, sem discussão",
        "Nascer do sol sobre a baía hoje {emoji}",
        "{weekday}, chuva, chá e manta. Perfeito.",
        "Padaria nova em {street}, a fila vale a pena",
        "Nevoeiro tão cerrado que não se vê o farol",
        "Teletrabalho na biblioteca hoje",
        "Alguém vem nadar a Northmole?",
        "Acabei de chegar do sul, estou a adorar {flag}",
        "A avó faz 90 anos hoje {emoji}",
        "Uma foca na marina!!",
        "Gelado às 9 da manhã, sem arrependimentos",
        "Boa noite de {district} {emoji}",
        "Passeio com o cão na praia de Eelbrook {emoji}",
        "{district} cheira a pão quente todas as manhãs",
        "Ensaio do coro em {district} hoje",
        "Primeiro mergulho do ano. Fria. Muito fria.",
        "Chocolate quente e lugar à janela em {district}",
        "A horta comunitária de {district} já tem tomates",
    ],
    "nl": [
        "Eerst koffie {emoji}",
        "Een meeuw heeft mijn {food} gejat. Respect.",
        "Beste {food} van {district}, geen discussie",
        "Zonsopgang boven de baai vanochtend {emoji}",
        "{weekday}, regen, thee en een dekentje. Perfect.",
        "Nieuwe bakker aan de {street}, de rij is het waard",
        "Zo'n dikke mist dat je de vuurtoren niet ziet",
        "Thuiswerken in de bibliotheek vandaag",
        "Wie gaat er mee zwemmen bij Northmole?",
        "Net verhuisd uit het zuiden, het bevalt me prima {flag}",
        "Oma wordt vandaag 90 {emoji}",
        "Een zeehond in de jachthaven!!",
        "IJs om 9 uur 's ochtends, geen spijt",
        "Welterusten vanuit {district} {emoji}",
        "Met de hond over het strand van Eelbrook {emoji}",
        "{district} ruikt elke ochtend naar vers brood",
        "Koorrepetitie in {district} vanavond",
        "Eerste duik van het jaar. Koud. Heel koud.",
        "Warme chocolademelk en een plekje bij het raam in {district}",
        "De buurtmoestuin in {district} heeft al tomaten",
    ],
}

# Neutral second sentences, appended to some posts so that fillers (and
# topic posts) are not exact copies. None contains a word any query asks for.
TAILS = {
    "en": ["Wish me luck.", "Who's with me?", "Life is good.", "Send help.", "Anyway.", "Just saying.",
           "Not complaining.", "What a week.", "Back to it.", "Can't wait for the weekend.",
           "Love this place.", "Only in Quillhaven.", "Every time.", "Thoughts?", "So that happened.",
           "No regrets.", "Tell me I'm not alone.", "Peak {weekday}.", "Happy {weekday} everyone.",
           "Ten out of ten.", "Still smiling."],
    "de": ["Drückt mir die Daumen.", "Wer ist dabei?", "Das Leben ist schön.", "Egal.", "Nur so.",
           "Was für eine Woche.", "Typisch Quillhaven.", "Jedes Mal.", "Meinungen?", "Keine Reue.",
           "Schönen {weekday} euch.", "Ich sag ja nur.", "Hach."],
    "fr": ["Croisez les doigts.", "Qui est partant ?", "La vie est belle.", "Bref.",
           "Je dis ça je dis rien.", "Quelle semaine.", "Typique de Quillhaven.", "À chaque fois.",
           "Des avis ?", "Aucun regret.", "Bon {weekday} à tous.", "Voilà voilà."],
    "es": ["Deseadme suerte.", "¿Quién se apunta?", "La vida es bella.", "En fin.", "Solo digo.",
           "Vaya semana.", "Típico de Quillhaven.", "Siempre igual.", "¿Opiniones?",
           "Sin arrepentimientos.", "Feliz {weekday} a todos.", "Qué le vamos a hacer."],
    "it": ["Incrociate le dita.", "Chi viene?", "La vita è bella.", "Vabbè.", "Dico solo.",
           "Che settimana.", "Tipico di Quillhaven.", "Ogni volta.", "Opinioni?", "Nessun rimpianto.",
           "Buona giornata a tutti."],
    "pt": ["Desejem-me sorte.", "Quem alinha?", "A vida é bela.", "Enfim.", "Só digo isto.",
           "Que semana.", "Típico de Quillhaven.", "Sempre a mesma coisa.", "Opiniões?",
           "Sem arrependimentos.", "Bom dia a todos."],
    "nl": ["Duim voor me.", "Wie doet mee?", "Het leven is mooi.", "Enfin.", "Ik zeg het maar.",
           "Wat een week.", "Typisch Quillhaven.", "Elke keer weer.", "Meningen?", "Geen spijt.",
           "Fijne {weekday} allemaal."],
}

# Two-word everyday posts (not about any query).
FILLER_TWO_WORD = {
    "en": ["Monday again", "Gorgeous sunset", "Coffee time", "So windy", "Beach day", "Good morning"],
    "de": ["Endlich Wochenende", "Guten Morgen", "Herrliches Wetter", "Kaffee bitte"],
    "fr": ["Bonne journée", "Enfin vendredi", "Quel vent", "Café s'il-vous-plaît"],
    "es": ["Buenos días", "Qué calor", "Por fin viernes", "Vaya viento"],
    "it": ["Buongiorno ragazzi", "Che vento", "Finalmente venerdì"],
    "pt": ["Bom dia", "Que vento", "Finalmente sexta"],
    "nl": ["Goedemorgen allemaal", "Eindelijk vrijdag", "Wat een wind"],
}

# ---------------------------------------------------------------------------
# Queries. grades: topic -> grade for posts in the query's language(s).
# `distract`: trap topics whose posts are judged (grade 0) as distractors.
# ---------------------------------------------------------------------------

QUERIES: list[dict] = []


def query(text, lang, tags, grades, distract=(), langs=None):
    """Register a query; ids are assigned in registration order."""
    for t in tags:
        assert t in QUERY_TAGS, t
    QUERIES.append({
        "text": text, "lang": lang, "tags": list(tags), "grades": dict(grades),
        "distract": list(distract), "langs": set(langs) if langs else {lang},
    })


# -- inflected English: stemming conflates the posts' forms with the query's --
query("ferry delays", "en", ["inflected"],
      {"ferry_delay": 3, "ferry_cancel": 1, "ferry_cancel_short": 1},
      ["tram_delay", "ferry_general"])
query("stolen bikes", "en", ["inflected"],
      {"bike_theft": 3, "bike_theft_tag": 3},
      ["phone_theft", "bike_share"])
query("tram breakdowns", "en", ["inflected"],
      {"tram_breakdown": 3, "tram_delay": 1},
      ["tram_costs", "tram_general"])
query("flooded streets", "en", ["inflected"],
      {"storm_flood": 3, "high_tide": 1, "storm_damage": 1},
      ["tourists_flooded", "festival_streets"])
query("rent increases", "en", ["inflected"],
      {"rent_increase": 3, "housing_general": 1},
      ["ferry_fare", "bike_share"])
query("lost keys", "en", ["inflected"],
      {"lost_keys": 3},
      ["lost_item", "lost_wallet", "lost_pet"])
query("market opening hours", "en", ["inflected", "multiword"],
      {"market_hours": 3},
      ["opening_hours_misc", "market_general", "market_stalls"])
query("closed bike lanes", "en", ["inflected", "multiword"],
      {"bike_lane_closed": 3, "cycle_route": 1},
      ["bike_share", "cycling_misc"])
query("damaged roofs", "en", ["inflected"],
      {"roof_damage": 3, "storm_damage": 1},
      ["damaged_misc"])
query("cycling routes", "en", ["inflected"],
      {"cycle_route": 3, "bike_lane_closed": 1},
      ["cycling_misc", "tram_routes"])
query("ferry ticket prices", "en", ["inflected", "multiword"],
      {"ferry_fare": 3, "ticket_machine": 1},
      ["market_prices", "high_tide_fest"])
query("cancelled sailings", "en", ["inflected"],
      {"ferry_cancel": 3, "ferry_cancel_short": 3, "ferry_refund": 1},
      ["sailing_club", "event_cancel"])
query("wifi on the ferries", "en", ["inflected", "multiword"],
      {"ferry_wifi": 3},
      ["cafe_wifi", "ferry_general"])

# -- inflected non-English: a language's own stemmer is needed --
query("Verspätung Fähre", "de", ["inflected", "non-english"],
      {"ferry_delay": 3},
      ["tram_delay", "ferry_general"])
query("Fahrrad gestohlen", "de", ["inflected", "non-english"],
      {"bike_theft": 3},
      ["phone_theft", "bike_general"])
query("Miete Wohnung", "de", ["inflected", "non-english"],
      {"rent_de": 3})
query("retard navette", "fr", ["inflected", "non-english"],
      {"ferry_delay": 3, "ferry_cancel": 1, "ferry_cancel_short": 1},
      ["tram_delay", "ferry_general"])
query("quai inondé", "fr", ["inflected", "non-english"],
      {"quai_flood": 3, "storm_fr": 1},
      ["quai_misc", "inonde_tourists"])
query("retraso del barco", "es", ["inflected", "non-english"],
      {"ferry_delay": 3},
      ["tram_delay", "barco_general"])
query("bicicleta robada", "es", ["inflected", "non-english"],
      {"bike_theft": 3},
      ["bike_general"])
query("ritardo traghetto", "it", ["inflected", "non-english"],
      {"ferry_delay": 3},
      ["traghetto_general"])
query("bicicletta rubata", "it", ["inflected", "non-english"],
      {"bike_theft": 3})
query("atraso do barco", "pt", ["inflected", "non-english"],
      {"ferry_delay": 3},
      ["barco_general"])
query("chave perdida", "pt", ["inflected", "non-english"],
      {"lost_keys": 3},
      ["door_pt"])
query("vertraging veerboot", "nl", ["inflected", "non-english"],
      {"ferry_delay": 3, "ferry_cancel": 1, "ferry_cancel_short": 1},
      ["veerboot_general"])
query("fietspad afgesloten", "nl", ["inflected", "non-english"],
      {"bike_path": 3},
      ["bike_general"])

# -- hashtag-only: the relevant posts carry the query words only inside tags --
query("harbour market", "en", ["hashtag-only"],
      {"market_tag": 3, "market_general": 2, "market_hours": 2, "market_stalls": 2,
       "market_prices": 2, "cs_pescado": 1},
      ["marketing_stalled", "high_tide"])
query("night ferry", "en", ["hashtag-only"],
      {"night_ferry_tag": 3, "night_ferry": 3},
      ["ferry_general"])
query("lost and found", "en", ["hashtag-only", "multiword"],
      {"lost_found_tag": 3, "lost_item": 2, "lost_keys": 2, "lost_wallet": 2, "lost_wallet_tram4": 2},
      ["lost_cat_band", "lost_pet"])
query("storm warning", "en", ["hashtag-only"],
      {"storm_warning_tag": 3, "storm_warning": 3, "tidewatch": 2, "storm_damage": 1},
      ["pickpocket_warning"])
query("bike theft", "en", ["hashtag-only"],
      {"bike_theft_tag": 3, "bike_theft": 3},
      ["phone_theft", "bike_share"])
query("noise complaint", "en", ["hashtag-only"],
      {"noise_tag": 3, "noise_complaint": 3, "noise": 2},
      ["complaint_misc"])
query("street festival", "en", ["hashtag-only"],
      {"street_fest_tag": 3, "street_fest": 3, "festival_streets": 2},
      ["storm_flood", "high_tide_fest"])
query("fête du port", "fr", ["hashtag-only", "non-english"],
      {"fete_port_tag": 3, "fete_port": 3},
      ["marche_verb", "fete_quartier"])
query("mercado del puerto", "es", ["hashtag-only", "non-english"],
      {"market_tag": 3, "market_es": 3},
      ["port_closed", "door_es"])
query("mercato del porto", "it", ["hashtag-only", "non-english"],
      {"market_tag": 3, "market_it": 3},
      ["port_closed"])
query("feira do porto", "pt", ["hashtag-only", "non-english"],
      {"market_tag": 3, "market_pt": 3},
      ["port_closed", "door_pt"])

# -- multiword queries whose words hide in unrelated compound tags --
query("tram stop", "en", ["multiword"],
      {"tram_stop": 3},
      ["stop_the_tram", "tram_general"])
query("high tide", "en", ["multiword"],
      {"high_tide": 3, "storm_flood": 1},
      ["high_tide_fest"])
query("lost cat", "en", ["multiword"],
      {"lost_pet": 3},
      ["lost_cat_band", "lost_item"])
query("lost wallet tram 4", "en", ["multiword"],
      {"lost_wallet_tram4": 3, "lost_wallet": 1},
      ["lost_item", "tram_general"])

query("fish prices harbour market", "en", ["multiword"],
      {"market_prices": 3, "cs_pescado": 1},
      ["ferry_fare", "market_stalls"])
query("student rooms near the university", "en", ["multiword"],
      {"univ_housing": 3, "housing_general": 1},
      ["club_universe"])
query("Keller unter Wasser", "de", ["multiword", "non-english"],
      {"keller_flood": 3, "storm_de": 1},
      ["ferry_general"])

# -- over-stemming: the stemmer conflates different words --
query("university housing", "en", ["overstem"],
      {"univ_housing": 3, "housing_general": 1},
      ["club_universe", "universe_misc"])
query("organ concert", "en", ["overstem"],
      {"organ_concert": 3},
      ["concert_organized"])
query("market stalls", "en", ["overstem"],
      {"market_stalls": 3, "market_general": 1},
      ["marketing_stalled", "tram_breakdown"])
query("harbour authority", "en", ["overstem"],
      {"harbour_authority": 3},
      ["author_event"])
query("puerto cerrado", "es", ["overstem", "non-english"],
      {"port_closed": 3},
      ["door_es"])
query("porto chiuso", "it", ["overstem", "non-english"],
      {"port_closed": 3},
      ["door_it"])
query("porto fechado", "pt", ["overstem", "non-english"],
      {"port_closed": 3},
      ["door_pt"])
query("marché du port", "fr", ["overstem", "non-english"],
      {"marche_port": 3},
      ["marche_verb"])

# -- short: relevant posts are two-word posts whose language is easily misdetected --
query("ferries cancelled", "en", ["short"],
      {"ferry_cancel_short": 3, "ferry_cancel": 2},
      ["event_cancel", "ferry_general"])
query("navette annulée", "fr", ["short", "non-english"],
      {"ferry_cancel_short": 3, "ferry_cancel": 2},
      ["ferry_general"])
query("tranvía averiado", "es", ["short", "non-english"],
      {"tram_short": 3, "tram_broken": 3},
      ["tram_general"])
query("tram bloccati", "it", ["short", "non-english"],
      {"tram_short": 3, "tram_broken": 3},
      ["tram_general"])
query("elétrico avariado", "pt", ["short", "non-english"],
      {"tram_short": 3, "tram_broken": 3},
      ["tram_general"])
query("veerboot uitgevallen", "nl", ["short", "non-english"],
      {"ferry_cancel_short": 3, "ferry_cancel": 3, "ferry_delay": 1},
      ["veerboot_general"])

# -- accented: relevant posts use unaccented spellings --
query("café brunch", "en", ["accented"],
      {"cafe": 3},
      ["brunch_misc", "cafe_wifi"])
query("Fähre Fahrplan", "de", ["accented", "non-english"],
      {"faehre_fahrplan": 3},
      ["tram_general", "ferry_general"])
query("ação de limpeza", "pt", ["accented", "non-english"],
      {"acao_limpeza": 3},
      ["limpeza_misc"])
query("información tranvía", "es", ["accented", "non-english"],
      {"info_tranvia": 3},
      ["info_misc", "tram_general"])
query("fête de quartier", "fr", ["accented", "non-english"],
      {"fete_quartier": 3},
      ["fete_port_tag"])

# -- code-switched posts --
query("ferry lleno", "es", ["code-switched"],
      {"cs_ferry_lleno": 3},
      ["ferry_general", "barco_general"], langs=("es", "en"))
query("pescado fresco market", "es", ["code-switched", "multiword"],
      {"cs_pescado": 3, "market_es": 1, "market_tag": 1},
      ["market_prices"], langs=("es", "en"))
query("tram kaputt", "de", ["code-switched"],
      {"cs_tram_kaputt": 3, "tram_delay": 1},
      ["heating_kaputt", "tram_general"], langs=("de", "en"))
query("fiets gestolen", "nl", ["code-switched"],
      {"cs_fiets": 3},
      ["bike_general", "bike_theft"], langs=("nl", "en"))

# -- mentions --
query("quillferries refund", "en", ["mention"],
      {"ferry_refund": 3},
      ["ferry_cancel", "ferry_delay"])
query("@tidewatch gusts", "en", ["mention"],
      {"tidewatch": 3, "storm_warning": 1, "storm_warning_tag": 1},
      ["storm_damage"])
query("quillbike dock empty", "en", ["mention", "multiword"],
      {"bike_dock_empty": 3, "bike_share": 1},
      ["bike_theft"])

# ---------------------------------------------------------------------------
# Generation
# ---------------------------------------------------------------------------

SLOT_RE = re.compile(r"\{(\w+?)(2?)\}")


def slot_values(lang: str, name: str) -> list[str]:
    if name in LANG_SLOTS[lang]:
        return LANG_SLOTS[lang][name]
    return COMMON_SLOTS[name]


def fill(template: str, lang: str, rng: random.Random) -> str:
    chosen: dict[str, str] = {}

    def repl(m: re.Match) -> str:
        name, second = m.group(1), m.group(2)
        values = slot_values(lang, name)
        if second:
            others = [v for v in values if v != chosen.get(name)]
            return rng.choice(others)
        if name not in chosen:
            chosen[name] = rng.choice(values)
        return chosen[name]

    return SLOT_RE.sub(repl, template)


def add_texture(text: str, lang: str, spec: dict, rng: random.Random) -> str:
    """Add the short-post texture: topic tags, emoji, mentions, URLs, casing."""
    if spec["two_word"]:
        return text
    if len(spec["langs"]) == 1 and rng.random() < spec.get("tail_p", 0.3):
        sep = " " if text.rstrip()[-1:] in ".!?" else ". "
        text = text.rstrip() + sep + fill(rng.choice(TAILS[lang]), lang, rng)
    extras = []
    if spec["tags"] and rng.random() < spec["tag_p"]:
        extras.append(rng.choice(spec["tags"]))
    if rng.random() < 0.10:
        extras.append(rng.choice(GENERIC_TAGS[lang]))
    if rng.random() < 0.05:
        extras.insert(0, rng.choice(GENERIC_MENTIONS))
    if rng.random() < 0.05 and "{url}" not in text and "http" not in text:
        extras.append(rng.choice(COMMON_SLOTS["url"]))
    r = rng.random()
    if r < 0.22:
        extras.append(rng.choice(COMMON_SLOTS["emoji"]))
    elif r < 0.28:
        # emoji glued to the last word, no space
        text = text.rstrip() + rng.choice(COMMON_SLOTS["emoji"])
    out = text if not extras else text + " " + " ".join(extras)
    c = rng.random()
    if c < 0.07:
        out = out.lower()
    elif c < 0.09 and len(out) < 60:
        out = out.upper()
    return out


def make_handles(rng: random.Random) -> list[str]:
    first = ["salty", "sleepy", "windy", "rusty", "lucky", "grey", "little", "quiet", "brave", "misty",
             "sunny", "early", "late", "tidal", "northern"]
    second = ["gull", "heron", "oyster", "kelp", "anchor", "lantern", "crab", "otter", "pier", "tram",
              "rower", "baker", "fiddler", "skipper", "puffin"]
    handles = set()
    while len(handles) < 420:
        h = rng.choice(first) + rng.choice(["_", "", "."]) + rng.choice(second)
        if rng.random() < 0.55:
            h += str(rng.randint(1, 99))
        handles.add(h)
    return sorted(handles)


def make_ts(rng: random.Random) -> str:
    day = rng.randint(0, 179)  # 2026-01-05 + up to 179 days
    month_lengths = [31, 28, 31, 30, 31, 30, 31]
    m, d = 1, 5 + day
    while d > month_lengths[m - 1]:
        d -= month_lengths[m - 1]
        m += 1
    h = rng.choices(range(24), weights=[1, 1, 1, 1, 1, 2, 4, 6, 6, 5, 4, 4, 5, 4, 4, 4, 5, 6, 6, 6, 5, 4, 3, 2])[0]
    return f"2026-{m:02d}-{d:02d}T{h:02d}:{rng.randint(0, 59):02d}:{rng.randint(0, 59):02d}Z"


def build():
    """Build posts, queries and judgments. Returns (posts, queries, qrels)."""
    rng = random.Random(SEED)
    handles = make_handles(rng)
    raw = []  # dicts: text, lang, langs, topic, declared

    def emit(topic_name, lang, spec, text):
        declared = rng.random() < spec["declare_p"]
        raw.append({"text": text, "lang": lang, "langs": spec["langs"], "topic": topic_name,
                    "declared": declared})

    for topic_name, by_lang in TOPICS.items():
        for lang, spec in by_lang.items():
            templates = spec["templates"]
            for i in range(spec["n"]):
                # cycle through templates first so each is used, then random
                t = templates[i] if i < len(templates) else rng.choice(templates)
                text = add_texture(fill(t, lang, rng), lang, spec, rng)
                emit(topic_name, lang, spec, text)

    # A few long posts (> 280 chars): rants joining several posts of one topic.
    for topic_name, lang in [("rent_increase", "en"), ("housing_general", "en"), ("noise", "en"),
                             ("rent_de", "de"), ("quai_flood", "fr"), ("ferry_delay", "es")]:
        spec = TOPICS[topic_name][lang]
        for _ in range(2):
            parts = rng.sample(spec["templates"], k=min(4, len(spec["templates"])))
            text = ". ".join(fill(p, lang, rng).rstrip(".!? ") for p in parts)
            text += ". " + {"en": "Honestly I don't know how much longer people can take this, something has to change.",
                            "de": "Ehrlich, ich weiß nicht, wie lange das noch gut geht, es muss sich etwas ändern.",
                            "fr": "Franchement je ne sais pas combien de temps on va tenir comme ça, il faut que ça change.",
                            "es": "Sinceramente no sé cuánto tiempo más vamos a aguantar esto, algo tiene que cambiar."}[lang]
            emit(topic_name, lang, spec, text)

    # Fillers up to each language's target.
    have = Counter(p["lang"] for p in raw)
    filler_spec = {"tags": [], "tag_p": 0.0, "two_word": False, "declare_p": DECLARE_P}
    for lang in LANGS:
        need = LANG_TARGET[lang] - have[lang]
        assert need > 0, (lang, have[lang])
        n_two = max(4, need // 45)
        for i in range(need):
            if i < n_two:
                text = rng.choice(FILLER_TWO_WORD[lang])
                spec = dict(filler_spec, two_word=True, langs=(lang,))
            else:
                if rng.random() < 0.01:
                    parts = rng.sample(FILLERS[lang], k=4)
                    text = ". ".join(fill(p, lang, rng).rstrip(".!? ") for p in parts) + "."
                else:
                    text = fill(rng.choice(FILLERS[lang]), lang, rng)
                spec = dict(filler_spec, tags=GENERIC_TAGS[lang], tag_p=0.2, langs=(lang,), tail_p=0.6)
                text = add_texture(text, lang, spec, rng)
            emit("chatter", lang, spec, text)

    # Order by time, then assign ids.
    for p in raw:
        p["ts"] = make_ts(rng)
        p["author"] = rng.choice(handles)
    order = sorted(range(len(raw)), key=lambda i: (raw[i]["ts"], i))
    posts = []
    for n, i in enumerate(order, start=1):
        p = raw[i]
        p["id"] = f"p{n:05d}"
        posts.append(p)

    queries = []
    for n, q in enumerate(QUERIES, start=1):
        queries.append(dict(q, id=f"q{n:02d}"))

    qrels = judge(posts, queries, rng)
    return posts, queries, qrels


CRUDE_SUFFIXES = ("ations", "ation", "ings", "ing", "ies", "ied", "ers", "er", "ed", "es", "en", "e",
                  "s", "a", "o", "i", "é", "ée", "és", "ées")


def crude_stem(word: str) -> str:
    """A crude suffix stripper (only used to find lexical look-alikes for the pool)."""
    for suf in CRUDE_SUFFIXES:
        if word.endswith(suf) and len(word) - len(suf) >= 4:
            return word[: -len(suf)]
    return word


WORD_RE = re.compile(r"[^\W_]+", re.UNICODE)


def crude_terms(text: str) -> set[str]:
    return {crude_stem(w) for w in WORD_RE.findall(text.lower()) if len(w) > 2}


def judge(posts, queries, rng: random.Random):
    """Build the pool of each query and grade it from the posts' topics."""
    qrels = []
    terms_of = {p["id"]: crude_terms(p["text"]) for p in posts}
    for q in queries:
        graded, abstain = {}, set()
        for p in posts:
            g = q["grades"].get(p["topic"])
            if g is None:
                continue
            if set(p["langs"]) & q["langs"]:
                graded[p["id"]] = g
            else:
                abstain.add(p["id"])  # on topic but in a language the searcher does not read
        pool = dict(graded)
        candidates = [p for p in posts if p["id"] not in pool and p["id"] not in abstain]
        # planted distractors (trap topics), any language
        traps = [p for p in candidates if p["topic"] in q["distract"]]
        room = max(6, 40 - len(graded))  # big pools get fewer extras
        for p in rng.sample(traps, k=min(12, room, len(traps))):
            pool[p["id"]] = 0
        # lexical look-alikes: share a crude stem with the query
        qterms = crude_terms(q["text"])
        lex = [p for p in candidates if p["id"] not in pool and terms_of[p["id"]] & qterms]
        for p in rng.sample(lex, k=min(8, room, len(lex))):
            pool[p["id"]] = 0
        # random posts, and more until at least 15 are judged
        rest = [p for p in candidates if p["id"] not in pool]
        k = max(4, 15 - len(pool))
        for p in rng.sample(rest, k=k):
            pool[p["id"]] = 0
        for doc_id in sorted(pool):
            qrels.append((q["id"], doc_id, pool[doc_id]))
    qrels.sort()
    return qrels


# ---------------------------------------------------------------------------
# Output and self-check
# ---------------------------------------------------------------------------

def render(posts, queries, qrels) -> dict[str, str]:
    lines = []
    for p in posts:
        obj = {"id": p["id"], "text": p["text"]}
        if p["declared"]:
            obj["lang"] = p["lang"]
        obj["author"] = p["author"]
        obj["ts"] = p["ts"]
        lines.append(json.dumps(obj, ensure_ascii=False, separators=(",", ":")))
    posts_txt = "\n".join(lines) + "\n"

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["query_id", "text", "lang", "tags"])
    for q in queries:
        w.writerow([q["id"], q["text"], q["lang"], ";".join(q["tags"])])
    queries_txt = buf.getvalue()

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["query_id", "doc_id", "grade"])
    for row in qrels:
        w.writerow(row)
    qrels_txt = buf.getvalue()
    return {
        "corpora/demo/posts.jsonl": posts_txt,
        "judgments/demo/queries.csv": queries_txt,
        "judgments/demo/qrels.csv": qrels_txt,
    }


URL_RE = re.compile(r"https?://([^/\s]+)")
HANDLE_HOST_RE = re.compile(r"@\w+@(\w+(?:\.\w+)*)")
TAG_RE = re.compile(r"#[\w]+")


def self_check(posts, queries, qrels) -> None:
    assert 3000 <= len(posts) <= 5000, len(posts)
    ids = [p["id"] for p in posts]
    assert len(set(ids)) == len(ids)
    by_id = {p["id"]: p for p in posts}
    for p in posts:
        assert p["lang"] in LANGS and all(l in LANGS for l in p["langs"])
        assert p["text"] and "\n" not in p["text"] and p["text"] == p["text"].strip()
        assert "{" not in p["text"] and "}" not in p["text"], p["text"]
        for host in URL_RE.findall(p["text"]):
            assert host.endswith(("example.org", "example.com", ".invalid")), host
        for host in HANDLE_HOST_RE.findall(p["text"]):
            assert host.endswith(".example"), host
    lengths = [len(p["text"]) for p in posts]
    assert sum(20 <= n <= 280 for n in lengths) / len(lengths) > 0.85
    assert sum(n > 280 for n in lengths) >= 5
    assert sum(len(p["text"].split()) == 2 for p in posts) >= 50
    declared = sum(p["declared"] for p in posts) / len(posts)
    assert 0.25 <= declared <= 0.35, declared

    assert 60 <= len(queries) <= 80, len(queries)
    assert len({q["id"] for q in queries}) == len(queries)
    assert len({(q["text"], q["lang"]) for q in queries}) == len(queries)
    for q in queries:
        assert q["lang"] in LANGS and q["tags"]
    per_q: dict[str, list[tuple[str, int]]] = {q["id"]: [] for q in queries}
    seen = set()
    for qid, doc, g in qrels:
        assert (qid, doc) not in seen
        seen.add((qid, doc))
        assert doc in by_id and 0 <= g <= 3
        per_q[qid].append((doc, g))
    for q in queries:
        judged = per_q[q["id"]]
        assert len(judged) >= 15, (q["id"], len(judged))
        assert any(g >= 1 for _, g in judged), q["id"]
        assert any(g == 0 for _, g in judged), q["id"]
        if "hashtag-only" in q["tags"]:
            # many relevant posts must contain the query's words only inside tags
            words = set(WORD_RE.findall(q["text"].lower()))
            content = words - {"du", "del", "do", "and"}
            tag_only = 0
            top = [d for d, g in judged if g >= 2]
            for d in top:
                plain = TAG_RE.sub(" ", by_id[d]["text"]).lower()
                if not (set(WORD_RE.findall(plain)) & content):
                    tag_only += 1
            assert tag_only >= 0.4 * len(top), (q["id"], tag_only, len(top))
    # judged grades follow topics: same topic and language => same grade
    grade_of = {}
    qmap = {q["id"]: q for q in queries}
    for qid, doc, g in qrels:
        p = by_id[doc]
        key = (qid, p["topic"], set(p["langs"]) & qmap[qid]["langs"] != set())
        assert grade_of.setdefault(key, g) == g, key


def report(posts, queries, qrels) -> str:
    out = []
    lang_true = Counter(p["lang"] for p in posts)
    lang_decl = Counter(p["lang"] for p in posts if p["declared"])
    cs = sum(len(p["langs"]) > 1 for p in posts)
    out.append(f"posts: {len(posts)} (declared lang: {sum(lang_decl.values())}, code-switched: {cs}, "
               f"two-word: {sum(len(p['text'].split()) == 2 for p in posts)}, "
               f"over 280 chars: {sum(len(p['text']) > 280 for p in posts)})")
    out.append("posts per language (written / of which declare `lang`):")
    for lang in LANGS:
        out.append(f"  {lang}: {lang_true[lang]:5d} / {lang_decl[lang]:4d}")
    tag_count = Counter(t for q in queries for t in q["tags"])
    out.append(f"queries: {len(queries)}; per tag (a query may have several):")
    for t in QUERY_TAGS:
        out.append(f"  {t}: {tag_count[t]}")
    qlang = Counter(q["lang"] for q in queries)
    out.append("queries per language: " + ", ".join(f"{l} {qlang[l]}" for l in LANGS))
    grades = Counter(g for _, _, g in qrels)
    out.append(f"judgments: {len(qrels)}; per grade: " + ", ".join(f"{g}: {grades[g]}" for g in (3, 2, 1, 0)))
    per_q = Counter(qid for qid, _, _ in qrels)
    rel_q = Counter(qid for qid, _, g in qrels if g >= 1)
    vals = sorted(per_q.values())
    rels = sorted(rel_q[q["id"]] for q in queries)
    out.append(f"judged per query: min {vals[0]}, median {statistics.median(vals):g}, max {vals[-1]}; "
               f"relevant (grade >= 1) per query: min {rels[0]}, median {statistics.median(rels):g}, max {rels[-1]}")
    out.append(f"distinct judged posts: {len({d for _, d, _ in qrels})} of {len(posts)}")
    return "\n".join(out)


# ---------------------------------------------------------------------------
# Optional rough simulation (`--simulate`): BM25 over three crude analysers,
# to check that the planted effects point the intended way. It is NOT the
# bench: no language routing, a toy suffix stripper instead of Snowball, a
# toy tag splitter. Run the real bench (`postassay run`) for real numbers.
# ---------------------------------------------------------------------------

SIM_SUFFIXES = ("ization", "ities", "ity", "ized", "izes", "ings", "ing", "ies", "ied", "ers", "er",
                "ed", "es", "s", "e")
SIM_WORD_RE = re.compile(r"#?[^\W_]+(?:_[^\W_]+)*", re.UNICODE)


def sim_stem(word: str) -> str:
    """A toy English suffix stripper (one suffix; `y` after a consonant)."""
    for suf in SIM_SUFFIXES:
        if word.endswith(suf) and len(word) - len(suf) >= 3:
            return word[: -len(suf)]
    if len(word) > 3 and word.endswith("y") and word[-2] not in "aeiou":
        return word[:-1]
    return word


def sim_split_tag(body: str, freqs: Counter, total: int) -> list[str]:
    """Toy tag splitter: `_`, letter/digit and lower/Upper boundaries, then a
    unigram Viterbi over corpus word counts for each lower-case chunk."""
    chunks = []
    for piece in body.split("_"):
        chunks += re.findall(r"[0-9]+|[A-ZÀ-Þ]?[^\WA-ZÀ-Þ0-9_]+|[A-ZÀ-Þ]+(?![^\WA-ZÀ-Þ0-9_])", piece)
    out = []
    for ch in chunks:
        low = ch.lower()
        if low.isdigit():
            out.append(low)
            continue
        n = len(low)
        best = [0.0] + [float("inf")] * n
        back = [0] * (n + 1)
        for j in range(1, n + 1):
            for i in range(max(0, j - 20), j):
                w = low[i:j]
                c = freqs.get(w, 0)
                cost = -math.log(c / total) if c else math.log(total) + 2.3 * (j - i)
                if best[i] + cost < best[j]:
                    best[j], back[j] = best[i] + cost, i
        parts, j = [], n
        while j > 0:
            parts.append(low[back[j]:j])
            j = back[j]
        out += reversed(parts)
    return out


def simulate(posts, queries, qrels) -> dict[str, dict[str, float]]:
    """Mean nDCG@10 per query tag for three toy chains; prints a table."""
    plain = Counter()
    for p in posts:
        for w in SIM_WORD_RE.findall(p["text"]):
            if not w.startswith("#") and not any(ch.isdigit() for ch in w):
                plain[w.lower()] += 1
    total = sum(plain.values())

    def analyse(text: str, chain: str) -> list[str]:
        toks = []
        for w in SIM_WORD_RE.findall(text):
            if w.startswith("#"):
                toks.append(w[1:].lower())
                if chain == "tagsplit":
                    parts = sim_split_tag(w[1:], plain, total)
                    if len(parts) > 1:
                        toks += parts
            else:
                toks.append(sim_stem(w.lower()) if chain == "stem" else w.lower())
        return toks

    rel = {}
    for qid, doc, g in qrels:
        rel.setdefault(qid, {})[doc] = g
    chains = ("plain", "stem", "tagsplit")
    result: dict[str, dict[str, float]] = {}
    per_query: dict[str, dict[str, float]] = {}
    for chain in chains:
        docs = {p["id"]: Counter(analyse(p["text"], chain)) for p in posts}
        lens = {d: sum(c.values()) for d, c in docs.items()}
        avg = sum(lens.values()) / len(lens)
        df = Counter(t for c in docs.values() for t in c)
        postings: dict[str, list[str]] = {}
        for d, c in docs.items():
            for t in c:
                postings.setdefault(t, []).append(d)
        for q in queries:
            scores: dict[str, float] = {}
            for t in set(analyse(q["text"], chain)):
                if t not in df:
                    continue
                idf = math.log(1 + (len(docs) - df[t] + 0.5) / (df[t] + 0.5))
                for d in postings[t]:
                    tf = docs[d][t]
                    scores[d] = scores.get(d, 0.0) + idf * tf * 2.2 / (tf + 1.2 * (0.25 + 0.75 * lens[d] / avg))
            ranked = [d for d, _ in sorted(scores.items(), key=lambda x: (-x[1], x[0]))[:10]]
            r = rel[q["id"]]
            dcg = sum((2 ** r.get(d, 0) - 1) / math.log2(i + 2) for i, d in enumerate(ranked))
            ideal = sorted(r.values(), reverse=True)[:10]
            idcg = sum((2 ** g - 1) / math.log2(i + 2) for i, g in enumerate(ideal))
            per_query.setdefault(q["id"], {})[chain] = dcg / idcg
    groups: dict[str, list[str]] = {"all": [q["id"] for q in queries]}
    for q in queries:
        for t in q["tags"]:
            groups.setdefault(t, []).append(q["id"])
        if q["lang"] == "en":
            for t in q["tags"]:
                groups.setdefault(t + " (en)", []).append(q["id"])
    print("rough simulation, mean nDCG@10 (toy analysers, no routing):")
    print(f"  {'query group':24s} {'n':>3s} " + " ".join(f"{c:>9s}" for c in chains))
    for name in sorted(groups):
        ids = groups[name]
        result[name] = {c: sum(per_query[i][c] for i in ids) / len(ids) for c in chains}
        print(f"  {name:24s} {len(ids):3d} " + " ".join(f"{result[name][c]:9.3f}" for c in chains))
    traps = [q["id"] for q in queries if q["text"] in ("tram stop", "high tide", "lost cat")]
    result["tag traps"] = {c: sum(per_query[i][c] for i in traps) / len(traps) for c in chains}
    return result


def check_simulation(result) -> None:
    """The planted effects must point the intended way, in both directions."""
    assert result["inflected (en)"]["stem"] > result["inflected (en)"]["plain"] + 0.15
    assert result["overstem (en)"]["stem"] < result["overstem (en)"]["plain"] - 0.15
    assert result["hashtag-only"]["tagsplit"] > result["hashtag-only"]["plain"] + 0.2
    assert result["tag traps"]["tagsplit"] < result["tag traps"]["plain"] - 0.15


def main() -> int:
    posts, queries, qrels = build()
    files = render(posts, queries, qrels)
    # Determinism: a second build in the same process must give the same bytes.
    again = render(*build())
    assert again == files, "generator is not deterministic"
    self_check(posts, queries, qrels)
    for rel, text in files.items():
        path = ROOT / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(text.encode("utf-8"))
    print(report(posts, queries, qrels))
    if "--simulate" in sys.argv[1:]:
        check_simulation(simulate(posts, queries, qrels))
    return 0


if __name__ == "__main__":
    sys.exit(main())
