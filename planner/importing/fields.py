"""The fields a CSV column can fill, with the header words that point to each.

To teach the importer another header word, add it here (normalised: lower case, words only,
distance units taken out, see `columns.header_key`).
"""

from __future__ import annotations

from dataclasses import dataclass

from planner.fleet import SPEC_FIELDS


@dataclass(frozen=True)
class FieldInfo:
    kind: str  # text, id, enum, date, distance, months, number, parts
    words: tuple[str, ...]  # likely header words, most specific first (normalised)
    help: str


# Our own list of likely header words, after normalising (lower case, words only, distance
# units taken out): "Odometer (km)" -> "odometer". A field's own name always matches too.
FLEET_FIELDS: dict[str, FieldInfo] = {
    "id": FieldInfo("id", ("vehicle id", "fleet no", "fleet number", "fleet", "fleet id",
                           "unit no", "unit number", "asset", "asset id", "asset no",
                           "vehicle no", "vehicle number", "vehicle", "registration", "reg",
                           "reg no", "plate", "number plate", "licence plate", "license plate",
                           "vrm"), "unique vehicle id (fleet number or plate)"),
    "label": FieldInfo("text", ("name", "vehicle name", "description", "make model",
                                "make and model", "model", "nickname", "role"),
                       "name shown beside the id"),
    "engine": FieldInfo("text", ("engine profile", "engine", "engine code", "engine type",
                                 "profile"), "engine profile id (rows sharing it form a profile)"),
    "fuel": FieldInfo("enum", ("fuel type",), "petrol, diesel or other"),
    "drive": FieldInfo("enum", ("cam drive", "timing drive", "drive type", "timing",
                                "timing type", "belt or chain"), "belt, wet-belt, chain or gear"),
    "interference": FieldInfo("enum", ("interference engine", "interfering"),
                              "interference, non-interference or unknown (yes/no accepted)"),
    "duty": FieldInfo("enum", ("duty cycle", "severe duty", "severe", "usage"),
                      "normal or severe (yes/no accepted)"),
    "in_service": FieldInfo("date", ("in service date", "date in service", "in service from",
                                     "on fleet", "date on fleet", "service start",
                                     "acquired", "date acquired",
                                     "purchase date", "purchased", "start date"),
                            "day the vehicle entered service (or the fleet)"),
    "first_registered": FieldInfo("date", ("first registration", "date first registered",
                                           "date of first registration", "registration date",
                                           "registered"),
                                  "day first registered, if bought used (the risk model "
                                  "assumes an unknown belt this old)"),
    "in_service_odometer": FieldInfo("distance", ("odometer in service", "start odometer",
                                                  "starting odometer", "odometer at start",
                                                  "odometer at purchase", "opening odometer",
                                                  "start mileage", "purchase mileage",
                                                  "mileage at purchase"),
                                     "odometer on the in-service day"),
    "belt_history": FieldInfo("enum", ("belt record",), "known or unknown (bought used "
                                                        "without a belt record)"),
    "interval_distance": FieldInfo("distance", ("belt interval", "interval", "belt interval "
                                                "distance", "service interval", "change every",
                                                "replace every"),
                                   "maker's interval by distance"),
    "interval_months": FieldInfo("months", ("belt interval months", "belt interval years",
                                            "interval months", "interval years", "interval age",
                                            "age limit", "interval time"),
                                 "maker's interval by age, months (a 'years' column is x12)"),
    "severe_interval_distance": FieldInfo("distance", ("severe interval",),
                                          "severe-service interval by distance"),
    "severe_interval_months": FieldInfo("months", ("severe interval years",),
                                        "severe-service interval by age"),
    "labour_hours": FieldInfo("number", ("labour", "labor hours", "labor", "hours", "job hours",
                                         "labour time"), "workshop hours for the job"),
    "parts": FieldInfo("parts", ("parts list", "parts needed", "kit"),
                       "parts, separated by ';', ',' or '|'"),
    "parts_cost": FieldInfo("number", ("parts price", "kit cost", "kit price", "cost of parts"),
                            "cost of the parts"),
    "failure_cost": FieldInfo("number", ("repair estimate", "failure repair", "engine repair cost",
                                         "damage cost", "cost if it fails"),
                              "repair estimate if the drive fails"),
    "notes": FieldInfo("text", ("note", "comments", "comment", "remarks"), "free text"),
    "contact_name": FieldInfo("text", ("customer", "customer name", "owner", "contact"),
                              "customer's name (contact.name)"),
    "contact_phone": FieldInfo("text", ("phone", "telephone", "tel", "mobile"),
                               "telephone (contact.phone)"),
    "contact_email": FieldInfo("text", ("email", "e mail"), "e-mail (contact.email)"),
    "belt_date": FieldInfo("date", ("last belt date", "last belt change", "last belt",
                                    "belt changed", "belt change date", "belt replaced",
                                    "date belt replaced", "belt done", "last cambelt"),
                           "day of the latest belt job (becomes a belt_jobs entry)"),
    "belt_odometer": FieldInfo("distance", ("last belt odometer", "belt changed at",
                                            "odometer at belt change", "mileage at belt change",
                                            "belt mileage", "last belt mileage"),
                               "odometer at the latest belt job"),
    "belt_reason": FieldInfo("enum", ("belt job reason", "reason"),
                             "scheduled, failed or precaution (default: scheduled, reported)"),
    "belt_work": FieldInfo("text", ("work done", "work"), "what the belt job replaced"),
    "belt_notes": FieldInfo("text", ("job notes",), "notes on the belt job"),
    "reading_date": FieldInfo("date", ("last reading date", "odometer date", "date of reading",
                                       "mileage date", "read on", "last reading"),
                              "day of the latest odometer reading"),
    "reading_odometer": FieldInfo("distance", ("odometer reading", "odometer", "current odometer",
                                               "latest odometer", "last odometer", "odo",
                                               "mileage", "current mileage", "reading"),
                                  "the latest odometer reading"),
}

READING_FIELDS: dict[str, FieldInfo] = {
    "id": FLEET_FIELDS["id"],
    "reading_date": FieldInfo("date", ("date", "reading date", "odometer date", "date of reading",
                                       "day", "read on", "transaction date", "timestamp"),
                              "day of the reading"),
    "reading_odometer": FieldInfo("distance", ("odometer", "odometer reading", "odo", "mileage",
                                               "reading", "km", "kms", "miles", "distance"),
                                  "odometer at that day, in the fleet's unit"),
}

# Vehicle keys that no single column can hold.
NOT_MAPPABLE = {"readings": "use reading_date and reading_odometer",
                "belt_jobs": "use belt_date and belt_odometer (and belt_reason, belt_work)",
                "unavailable": "add unavailable ranges in the fleet file itself",
                "contact": "use contact_name, contact_phone and contact_email"}


# The order an imported vehicle's keys are written in.
VEHICLE_ORDER = ("id", "label", "engine", "duty", "in_service", "first_registered",
                "in_service_odometer",
                "belt_history", *SPEC_FIELDS, "notes")
