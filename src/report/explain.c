/* explain.c - the explanation texts behind `knowable explain RULE` and the
 * SARIF rules' help: for every rule of rules.def, what it finds, why it
 * leaks or misleads a model's validation, a short schema fragment that
 * triggers it, and how to fix it.  The table is indexed by kn_rule; the
 * renderers and the CLI read it through kn_rule_explain. */
#include "diag.h"

#define EXPLAIN(e) [KN_R_##e]

static const kn_explain_text texts[] = {
    /* ---- 4.1 schema ---- */
    EXPLAIN(YAML_SYNTAX) = {
        "The schema file is not YAML that libyaml can read: for example a tab "
        "used for indentation, an unclosed quote or bracket, or a value where a "
        "key was expected. The check stops with exit status 2, because nothing "
        "after it can be trusted.",
        "No other rule can run on a file that cannot be read, so a schema with a "
        "syntax error proves nothing about the table. It stops the check instead "
        "of being one finding among others so that a CI job cannot mistake an "
        "unreadable schema for a clean one.",
        "columns:\n"
        "  bike_age_days:\n"
        "    known: bike_commissioned\n"
        "    source: [fleet_register\n",
        "Correct the YAML at the position given; when a second position is "
        "printed, it shows where the construct that failed began. Indent with "
        "spaces, and quote values that contain \": \" or start with a character "
        "YAML reserves.",
    },
    EXPLAIN(SCHEMA_SHAPE) = {
        "A key the schema format does not define, a value of the wrong type (a "
        "list where a mapping is expected, a string where a boolean is), a value "
        "outside the allowed set (such as role: predictor), or a required key "
        "that is missing. A close misspelling gets a \"did you mean\" suggestion.",
        "A misspelt key would otherwise be ignored, and with it the annotation it "
        "carries: a column whose known: was typed knwon: would be checked as if "
        "it had no timing at all. Refusing unknown keys makes every annotation "
        "either count or fail loudly.",
        "columns:\n"
        "  loan_days_requested:\n"
        "    role: feature\n"
        "    knwon: loan_requested\n",
        "Spell the key as the format defines it (see the suggestion) and give the "
        "value the documented type. Keys of your own must start with x_, which "
        "the checker ignores.",
    },
    EXPLAIN(UNKNOWN_REFERENCE) = {
        "A name used where an event, a source or a column is expected (in known, "
        "after, before, source, derived_from, join, window, prediction and so on) "
        "that is defined neither in the schema nor in its includes. The nearest "
        "defined name is suggested when one is close.",
        "A reference to an undefined event cannot be placed on the timeline, so "
        "the availability of every column that depends on it is unknown. A typo "
        "in an event name is exactly the kind of slip that would otherwise hide "
        "a late column.",
        "events:\n"
        "  order_placed: {}\n"
        "  dispatched:\n"
        "    after: {order_placed: [PT30M, P3D]}\n"
        "columns:\n"
        "  dispatch_depot:\n"
        "    known: dispatch\n",
        "Correct the name, or define the event, source or column it refers to, "
        "in this file or in an included register.",
    },
    EXPLAIN(DUPLICATE_KEY) = {
        "The same key twice in one YAML mapping, or the same event or source name "
        "defined in two files that are included together.",
        "YAML readers disagree about duplicate keys; most keep the last value "
        "without a word, so a reviewer reads one definition while the checker or "
        "the training code uses another. An event defined in two shared registers "
        "is the same hazard across files.",
        "columns:\n"
        "  meter_reading_m3:\n"
        "    known: meter_read\n"
        "  meter_reading_m3:\n"
        "    known: bill_issued\n",
        "Keep one definition. When two schemas need the same event or source, "
        "define it once in a shared register and include that register from both.",
    },
    EXPLAIN(BAD_DURATION) = {
        "A value that should be an ISO 8601 duration (PnYnMnWnDTnHnMnS with an "
        "optional leading '-') but is malformed, or a lag [MIN, MAX] whose "
        "minimum exceeds its maximum. The message points at the offending "
        "character.",
        "Every availability verdict is computed from these lags; a duration that "
        "cannot be read, or a range that contains no value, leaves the timeline "
        "undefined. Common slips are P1H for an hour (time units need the T: "
        "PT1H), a bare PT, and the two ends of a range written the wrong way "
        "round.",
        "events:\n"
        "  bike_unlocked: {}\n"
        "  bike_returned:\n"
        "    after: {bike_unlocked: [PT2H, PT30M]}\n",
        "Write the duration in ISO 8601 form (PT1H, P3D, PT0.5S, -PT15M) and "
        "order each range as [MIN, MAX], with null for an unbounded maximum.",
    },
    EXPLAIN(BAD_PATTERN) = {
        "A format pattern on a column, or a pattern in the rulebook, that PCRE2 "
        "cannot compile. The message gives PCRE2's reason and points at the "
        "offending character where it can.",
        "A pattern that does not compile checks nothing: values are not "
        "validated against it and the segments of an identifier go unreported, "
        "while the schema looks fully annotated. A broken rulebook pattern "
        "would likewise switch off the name checks that depend on it.",
        "columns:\n"
        "  parcel_barcode:\n"
        "    role: identifier\n"
        "    format: '^(?<depot>[A-Z]{3}(?<seq>[0-9]{8}$'\n",
        "Correct the pattern (PCRE2 syntax, as in Perl). Write it in single "
        "quotes in YAML so that backslashes reach PCRE2 unchanged.",
    },
    EXPLAIN(DERIVATION_CYCLE) = {
        "Columns whose derived_from lists lead back to themselves: a derived from "
        "b and b derived from a, or a longer loop. The notes list the cycle.",
        "A value cannot be computed from itself, so at least one declaration on "
        "the loop is wrong, and the availability of every column on it is "
        "undefined. Such loops often mean that two columns were computed from "
        "each other at different times, one of them after the moment.",
        "columns:\n"
        "  avg_loaf_price:\n"
        "    derived_from: [daily_revenue, loaves_sold]\n"
        "  daily_revenue:\n"
        "    derived_from: [avg_loaf_price, loaves_sold]\n"
        "  loaves_sold:\n"
        "    known: shop_closed\n",
        "Find the column on the loop that is really read from a source and "
        "declare it with known and source instead of derived_from.",
    },
    EXPLAIN(INCLUDE_REFUSED) = {
        "An include entry that is an absolute path, leaves the root folder "
        "(--root, by default the folder of the schema named on the command "
        "line), names a file that does not exist, or includes a file that is "
        "already being included.",
        "Schemas arrive in untrusted pull requests; if includes could leave the "
        "root, a schema could make the checker read, and quote in its messages, "
        "any file on the machine. A missing or looping include also leaves "
        "events and sources undefined.",
        "include:\n"
        "  - ../../shared/events.knowable.yaml\n"
        "  - /srv/registers/sources.knowable.yaml\n",
        "Use a relative path inside the root, or pass a wider --root when the "
        "shared register really lives higher up. Break an include loop by moving "
        "the shared part into a third file that both include.",
    },

    /* ---- 4.2 timeline and availability ---- */
    EXPLAIN(TIMELINE_CONTRADICTION) = {
        "The after and before constraints between events cannot all hold at "
        "once. The notes list the constraints on the offending cycle with their "
        "lines.",
        "The timeline is solved as a Simple Temporal Network (Dechter, Meiri & "
        "Pearl, 1991): each constraint bounds the difference of two event times, "
        "and the constraints can all hold exactly when their distance graph has "
        "no negative cycle. When they cannot, no assignment of times exists and "
        "every availability verdict drawn from them would be meaningless; the "
        "usual cause is a lag in the wrong direction or in the wrong unit.",
        "events:\n"
        "  parcel_collected: {}\n"
        "  hub_scan:\n"
        "    after: {parcel_collected: [PT2H, PT12H]}\n"
        "  delivered:\n"
        "    after:\n"
        "      hub_scan: [PT1H, P2D]\n"
        "      parcel_collected: [PT0S, PT2H]\n",
        "Read the cycle in the notes and correct the constraint that is wrong: a "
        "range with the wrong sign, after written for before, or minutes written "
        "as months (P5M is five months, PT5M five minutes).",
    },
    EXPLAIN(UNORDERED_EVENT) = {
        "An event that a column depends on (through known, a window's anchor or "
        "a join's as_of) has no chain of after or before constraints to the "
        "prediction moment.",
        "On the timeline, solved as a Simple Temporal Network (Dechter, Meiri & "
        "Pearl, 1991), an event without a path to the moment may lie at any distance "
        "from it, so nothing can be proven: the column may be available long "
        "before the moment or only long after it. Such a column passes no check "
        "and fails none, which is how a late column slips through.",
        "prediction:\n"
        "  moment: rental_started\n"
        "  target: returned_late\n"
        "events:\n"
        "  rental_started: {}\n"
        "  bike_serviced: {}\n"
        "columns:\n"
        "  days_since_service:\n"
        "    known: bike_serviced\n",
        "Relate the event to the moment or to an event that is related to it, "
        "for example bike_serviced: {before: {rental_started: [PT0S, null]}} when "
        "a service always precedes the rental. If no such guarantee exists, the "
        "column cannot be shown to be available.",
    },
    EXPLAIN(AFTER_MOMENT) = {
        "A feature whose availability (its known event plus delay, plus the "
        "source's latency and up to one refresh period) lies after the "
        "prediction moment in every case the timeline allows. The range comes "
        "from the timeline solved as a Simple Temporal Network (Dechter, Meiri & "
        "Pearl, 1991). Latency and refresh describe the serving path: how the "
        "deployed model reads the source when it is asked, not how the training "
        "table was filled.",
        "The value does not exist yet when the deployed model is asked, but it "
        "is present in the historical training table, so the model learns from "
        "it and validation looks excellent. In production the value is missing "
        "or still at a default, and accuracy falls. Values recorded while the "
        "outcome unfolds, such as a hub scan when predicting late delivery, are "
        "the usual case.",
        "prediction:\n"
        "  moment: parcel_collected\n"
        "  target: delivered_late\n"
        "events:\n"
        "  parcel_collected: {}\n"
        "  first_hub_scan:\n"
        "    after: {parcel_collected: [PT2H, PT12H]}\n"
        "columns:\n"
        "  first_hub_scan_depot:\n"
        "    known: first_hub_scan\n",
        "Drop the column, mark it role: excluded, or replace it by what is known "
        "at the moment (the planned depot instead of the scanned one). If the "
        "value really exists earlier, correct the event constraints instead. A "
        "value typed on the very screen where the model is asked (the loss "
        "description a claims handler types on the form that requests the "
        "score) comes with the request: declare it known at the moment itself, "
        "with no source, since the deployed model reads it from the request "
        "and not from a stored source.",
    },
    EXPLAIN(MAYBE_AFTER_MOMENT) = {
        "A feature whose availability range straddles the prediction moment: in "
        "some cases the timeline allows it is available in time, in others only "
        "after the moment. The message gives the range, for example \"between "
        "2h before and 1d 4h after\"; the range comes from the timeline solved as "
        "a Simple Temporal Network (Dechter, Meiri & Pearl, 1991). The source's "
        "latency and refresh describe the serving path (how the deployed model "
        "reads it when asked), and a known: {one_of: [...]} counts the hull of "
        "its members' ranges.",
        "Training rows contain the value whether or not it had arrived in time "
        "for that row, so the model learns from values that a share of the "
        "production requests will not have. Validation then scores better than "
        "production, most of all on the late cases.",
        "prediction:\n"
        "  moment: leak_alert_raised\n"
        "  target: leak_confirmed\n"
        "events:\n"
        "  leak_alert_raised: {}\n"
        "  meter_read:\n"
        "    before: {leak_alert_raised: [PT0S, PT6H]}\n"
        "sources:\n"
        "  meter_warehouse:\n"
        "    kind: internal\n"
        "    latency: PT1H\n"
        "    refresh: P1D\n"
        "columns:\n"
        "  last_reading_m3:\n"
        "    known: meter_read\n"
        "    source: meter_warehouse\n",
        "Tighten a bound of the timeline that is looser than the process, read "
        "the value from a source with a shorter latency or refresh, or use a "
        "window or an as_of join that ends early enough. When the late share is "
        "accepted, waive the rule with the reason. A value typed on the screen "
        "where the model is asked is known at the moment itself, with no "
        "source: it reaches the model with the request.",
    },
    EXPLAIN(INHERITS_LATE_INPUT) = {
        "A column derived, directly or through a chain of derived_from, from an "
        "input that is available after the moment. It is an error when the "
        "input is late in every case and a warning when only in some; the notes "
        "show the chain.",
        "A value computed from a late input is itself late, whatever its name: a "
        "ratio, a flag or a bucket of a late column carries the same future "
        "information. Availability follows the inputs' ranges on the timeline "
        "(a Simple Temporal Network, Dechter, Meiri & Pearl, 1991), and such "
        "derivations are easy to miss in review because the derived column "
        "itself looks harmless.",
        "prediction:\n"
        "  moment: order_placed\n"
        "  target: order_cancelled\n"
        "events:\n"
        "  order_placed: {}\n"
        "  oven_batch_done:\n"
        "    after: {order_placed: [PT1H, PT8H]}\n"
        "columns:\n"
        "  batch_weight_g:\n"
        "    known: oven_batch_done\n"
        "  weight_over_target:\n"
        "    derived_from: [batch_weight_g]\n",
        "Compute the column from inputs that are available at the moment, or "
        "exclude the derived column together with its late input.",
    },
    EXPLAIN(BUILT_FROM_TARGET) = {
        "A feature derived, directly or through a chain of derived_from, from "
        "the target column.",
        "A feature computed from the label hands the label to the model: it "
        "scores almost perfectly in validation and cannot be computed at "
        "prediction time, when the label does not exist yet. Chains hide it, as "
        "when a fee band is derived from a days-late column that also defines "
        "the target.",
        "prediction:\n"
        "  moment: rental_started\n"
        "  target: returned_late\n"
        "columns:\n"
        "  returned_late:\n"
        "    role: target\n"
        "    known: bike_returned\n"
        "  late_fee_band:\n"
        "    derived_from: [returned_late]\n",
        "Remove the target from the feature's inputs. If the column is needed "
        "for analysis, keep it with role: excluded.",
    },
    EXPLAIN(WINDOW_OVERRUNS) = {
        "An aggregation window whose end (anchor plus to) lies after the "
        "prediction moment, or after the newest record that can have landed in "
        "the source given its latency and refresh. It is an error when the "
        "window overruns in every case and a warning when only in some; times "
        "come from the timeline solved as a Simple Temporal Network (Dechter, "
        "Meiri & Pearl, 1991). The latency and refresh are those of the serving "
        "path: how the deployed model reads the source when asked, which may "
        "be slower than the batch that filled the training table.",
        "A count or a sum over a window that reaches past what is loaded at the "
        "moment includes records that did not exist yet, or had not been loaded "
        "yet, when the prediction would have been made. In production the same "
        "window is computed over fewer records, so the feature's values shift "
        "and the model misreads them.",
        "prediction:\n"
        "  moment: loan_requested\n"
        "  target: returned_late\n"
        "events:\n"
        "  loan_requested: {}\n"
        "sources:\n"
        "  circulation_db:\n"
        "    kind: internal\n"
        "    refresh: P1D\n"
        "columns:\n"
        "  loans_last_30d:\n"
        "    source: circulation_db\n"
        "    window: {anchor: loan_requested, from: -P30D, to: PT0S}\n",
        "End the window early enough to cover the source's latency and refresh "
        "(here to: -P1D), or anchor it on an earlier event. Records typed on the "
        "screen where the model is asked reach it with the request: they belong "
        "to a column known at the moment, not to a window over a source.",
    },
    EXPLAIN(KNOWN_BEFORE_INPUTS) = {
        "A derived column whose declared known event is earlier than its "
        "derived_from inputs allow: the value is claimed to exist before the "
        "values it is computed from. The comparison uses the ranges of the "
        "timeline solved as a Simple Temporal Network (Dechter, Meiri & Pearl, "
        "1991).",
        "One of the two declarations is wrong. If known is the wrong one, the "
        "column is reviewed against a time that is too early, and a late column "
        "can look available.",
        "events:\n"
        "  bike_unlocked: {}\n"
        "  bike_returned:\n"
        "    after: {bike_unlocked: [PT5M, P2D]}\n"
        "columns:\n"
        "  ride_km:\n"
        "    known: bike_returned\n"
        "  ride_minutes:\n"
        "    known: bike_returned\n"
        "  minutes_per_km:\n"
        "    known: bike_unlocked\n"
        "    derived_from: [ride_minutes, ride_km]\n",
        "Set known to the event at which all inputs exist, or remove it and let "
        "the inputs decide. If the column really comes from elsewhere, drop "
        "derived_from and declare its source.",
    },
    EXPLAIN(AS_OF_AFTER_MOMENT) = {
        "A join whose as_of event comes after the prediction moment on the "
        "timeline (a Simple Temporal Network, Dechter, Meiri & Pearl, 1991).",
        "A point-in-time join taken at a later event reads the joined value as "
        "it stood after the moment, so the row holds information the deployed "
        "model cannot have. It is a frequent slip when the as_of event is the "
        "event that settles the label.",
        "prediction:\n"
        "  moment: account_opened\n"
        "  target: first_bill_unpaid\n"
        "events:\n"
        "  account_opened: {}\n"
        "  first_bill_issued:\n"
        "    after: {account_opened: [P28D, P35D]}\n"
        "sources:\n"
        "  customer_register:\n"
        "    kind: internal\n"
        "    history: versioned\n"
        "columns:\n"
        "  account_id:\n"
        "    role: identifier\n"
        "  tariff_band:\n"
        "    source: customer_register\n"
        "    join: {key: account_id, as_of: first_bill_issued}\n",
        "Join as of the moment itself or an earlier event (here as_of: "
        "account_opened).",
    },
    EXPLAIN(READS_UNSETTLED_VALUES) = {
        "A feature read from a source whose records keep changing for a while "
        "after their event (the source's matures), where the record read (for a "
        "window, its newest) can be younger than matures at the moment on the "
        "timeline solved as a Simple Temporal Network (Dechter, Meiri & Pearl, "
        "1991). An as_of join on a source that keeps history (history: "
        "versioned or append, with point_in_time: true) is exempt. It is an "
        "error when every record read is unsettled at the moment, a warning "
        "when only some can be.",
        "The training table was filled long after the rows' moments, so it "
        "holds the settled values: a past claim later confirmed as fraud "
        "carries its confirmed flag. The deployed model reads the same records "
        "before they have settled, with most recent claims not yet flagged, "
        "so the feature means something else in production and validation "
        "overstates it.",
        "prediction:\n"
        "  moment: claim_scored\n"
        "  target: claim_fraudulent\n"
        "events:\n"
        "  claim_scored: {}\n"
        "sources:\n"
        "  claims_ledger:\n"
        "    kind: internal\n"
        "    matures: [P30D, P180D]\n"
        "columns:\n"
        "  fraud_flags_last_year:\n"
        "    source: claims_ledger\n"
        "    window: {anchor: claim_scored, from: -P365D, to: PT0S}\n",
        "Join the values as of the moment from a source that keeps history "
        "(join: {as_of: claim_scored} with history: versioned and "
        "point_in_time: true), or end the window matures before the moment "
        "(here to: -P180D), so that only settled records are read.",
    },
    EXPLAIN(TARGET_BEFORE_MOMENT) = {
        "A target whose label is settled at or before the prediction moment in "
        "every case consistent with the timeline (a Simple Temporal Network, "
        "Dechter, Meiri & Pearl, 1991). The label is settled at "
        "prediction.label_known, or without it at the target column's known "
        "event itself (its delay, latency and refresh only delay the "
        "recording).",
        "If the outcome is already decided when the model is asked, there is "
        "nothing left to predict: either the moment is declared too late (the "
        "model is really asked earlier), or label_known or the target's known "
        "event is mis-declared, and then every timing verdict of the schema "
        "rests on a wrong timeline. A model trained on such rows learns to read "
        "an outcome that, in production, it would be asked to foresee.",
        "prediction:\n"
        "  moment: loan_returned\n"
        "  target: returned_late\n"
        "events:\n"
        "  loan_made: {}\n"
        "  loan_returned:\n"
        "    after: {loan_made: [P1D, P60D]}\n"
        "columns:\n"
        "  returned_late:\n"
        "    role: target\n"
        "    known: loan_returned\n",
        "Declare the moment at which the model is really asked (here loan_made), "
        "and the event that settles the outcome as prediction.label_known (or "
        "as the target's known).",
    },

    /* ---- 4.3 provenance ---- */
    EXPLAIN(EXTERNAL_WITHOUT_PROVENANCE) = {
        "An external source that lacks provenance fields the rulebook requires "
        "(by default provider, license, retrieved and point_in_time). One "
        "diagnostic per source lists all the missing fields.",
        "Without the provider and the retrieval date nobody can tell which copy "
        "of the data a model was trained on, or whether it has changed since; "
        "without a licence the data may not be usable at all. Without "
        "point_in_time nobody knows whether the provider can serve values as "
        "they stood at past dates, which decides whether the historical rows "
        "are honest.",
        "sources:\n"
        "  rainfall_feed:\n"
        "    kind: external\n"
        "    description: hourly rainfall by district\n"
        "    provider: Example Weather Office\n",
        "Add the missing fields: who supplies the data, under which licence, "
        "when the copy in use was retrieved (YYYY-MM-DD), and whether the "
        "provider can serve past values (point_in_time).",
    },
    EXPLAIN(JOIN_LATEST_VALUE) = {
        "A column joined from an external source, or from a source with history: "
        "overwritten, without as_of.",
        "Such a join returns each value as it stands today, not as it stood at "
        "the row's moment. Training rows from last year then carry this year's "
        "values, and those values may have changed because of the very outcome "
        "being predicted (a member downgraded after late returns).",
        "sources:\n"
        "  member_register:\n"
        "    kind: internal\n"
        "    history: overwritten\n"
        "columns:\n"
        "  member_id:\n"
        "    role: identifier\n"
        "  membership_tier:\n"
        "    source: member_register\n"
        "    join: {key: member_id}\n",
        "Join as of an event at or before the moment (as_of) from a source that "
        "keeps history. If the source keeps only the current value, take dated "
        "snapshots of it and join those as of the moment.",
    },
    EXPLAIN(NO_POINT_IN_TIME_HISTORY) = {
        "A join with as_of from a source that cannot honour it, because it "
        "declares point_in_time: false or history: overwritten.",
        "The schema claims a point-in-time join, but the source can only return "
        "today's value, so the join silently behaves like a latest-value join. "
        "Reviewers who see as_of assume the problem is solved.",
        "sources:\n"
        "  flour_prices:\n"
        "    kind: external\n"
        "    provider: Example Grain Exchange\n"
        "    license: proprietary\n"
        "    retrieved: 2024-05-02\n"
        "    point_in_time: false\n"
        "columns:\n"
        "  supplier_id:\n"
        "    role: identifier\n"
        "  flour_price_eur:\n"
        "    source: flour_prices\n"
        "    join: {key: supplier_id, as_of: order_placed}\n",
        "Use a source, or a provider option, that serves past values, or keep "
        "dated snapshots of this one and join those; otherwise exclude the "
        "column.",
    },
    EXPLAIN(MISSING_SOURCE) = {
        "A feature without a source, when the rulebook requires one "
        "(require: feature: [source]).",
        "Without a source, the source's latency and refresh cannot be added to "
        "the column's availability, so the column is checked as if its value "
        "were queryable the instant its event happens. The loading delay is "
        "often what makes a value late.",
        "columns:\n"
        "  pipe_age_years:\n"
        "    known: pipe_laid\n",
        "Name the source the value is read from, and declare that source under "
        "sources with its latency and refresh.",
    },
    EXPLAIN(MISSING_KNOWN) = {
        "A feature with none of known, window or derived_from, so nothing says "
        "when its value exists.",
        "A column without timing cannot be checked: the report says nothing "
        "about it, and silence is easily read as approval. Unannotated columns "
        "are where late values most often hide.",
        "columns:\n"
        "  customs_hold:\n"
        "    role: feature\n"
        "    source: depot_system\n",
        "Declare the event from which the value exists (known), the window it "
        "aggregates, or the columns it is derived from; give columns the model "
        "does not receive role: excluded.",
    },
    EXPLAIN(UNUSED_SOURCE) = {
        "A source defined under sources that no column uses, neither as its "
        "source nor as a join's source. Only sources defined in the schema's "
        "own file are reported: a shared register included by many schemas "
        "holds sources that other tables use.",
        "It does no harm to the model, but the sources register then lists data "
        "the table does not contain, or a column that reads from this source "
        "fails to say so and misses its latency. It is a note so that registers "
        "stay accurate.",
        "sources:\n"
        "  oven_sensors:\n"
        "    kind: internal\n"
        "  till_system:\n"
        "    kind: internal\n"
        "columns:\n"
        "  loaves_sold:\n"
        "    known: shop_closed\n"
        "    source: till_system\n",
        "Remove the source, or name it on the columns that read from it.",
    },

    /* ---- 4.4 identity, proxies, anonymization ---- */
    EXPLAIN(IDENTIFIER_STRUCTURED) = {
        "An identifier whose format splits values into segments: named groups, "
        "alternatives of literals, or a fixed literal prefix. The notes name the "
        "segments.",
        "Structured identifiers encode facts: the depot that issued a parcel "
        "number, the branch of a library card, a prefix given only to "
        "re-deliveries. A model that sees the identifier, or anything derived "
        "from it, can read those facts, including ones assigned after the "
        "moment or tied to the outcome.",
        "columns:\n"
        "  parcel_number:\n"
        "    role: identifier\n"
        "    format: '^(?<depot>[A-Z]{3})-(?<service>EXP|STD)-[0-9]{8}$'\n",
        "Keep the identifier out of the features. If a segment is a legitimate "
        "feature (the service level is known at booking), declare it as a column "
        "of its own with its own known.",
    },
    EXPLAIN(IDENTIFIER_IN_FEATURES) = {
        "A feature whose name matches the rulebook's identifier pattern (by "
        "default names such as parcel_id, card_number or route_code), or whose "
        "format is set while its role is feature.",
        "Identifiers are usually issued in sequence or by a process that depends "
        "on time, branch or outcome, so a model learns patterns from them that do "
        "not carry over to new entities. They also let a model memorise entities "
        "that appear both in training and in test.",
        "columns:\n"
        "  card_number:\n"
        "    known: loan_requested\n",
        "Give the column role: identifier (or role: excluded). If it is a real "
        "feature with a misleading name, rename it or waive the rule with the "
        "reason.",
    },
    EXPLAIN(PROXY_OF_EXCLUDED) = {
        "A feature whose proxy_of names the target, an excluded column, or a "
        "column that is available after the moment.",
        "A proxy carries nearly the same information as the column it stands "
        "for; if that column may not be given to the model, neither may its "
        "proxy. Excluding a column while keeping its proxy leaks the same "
        "information under another name.",
        "prediction:\n"
        "  moment: order_placed\n"
        "  target: order_cancelled\n"
        "columns:\n"
        "  order_cancelled:\n"
        "    role: target\n"
        "    known: order_closed\n"
        "  fee_returned_eur:\n"
        "    known: order_placed\n"
        "    proxy_of: order_cancelled\n",
        "Exclude the proxy as well (role: excluded). If it is not really a proxy, "
        "remove proxy_of.",
    },
    EXPLAIN(SUSPICIOUS_NAME) = {
        "A feature whose name or description matches one of the rulebook's names "
        "patterns. The message quotes the reason the rulebook gives, for example "
        "that totals over a whole episode exist only when the episode ends.",
        "Words such as final, total or outcome often mark values computed once "
        "the episode is over. Each match asks for a second look at the column's "
        "known, which may have been copied from a neighbouring column.",
        "columns:\n"
        "  final_meter_reading:\n"
        "    known: account_opened\n",
        "Check when the value really exists and correct known. If the name "
        "misleads, rename the column or waive the rule with the reason.",
    },
    EXPLAIN(REVERSIBLE_ANONYMIZATION) = {
        "An anonymized column with method: hash but without salted: true, or an "
        "anonymized column still used as a feature together with "
        "quasi-identifiers.",
        "An unsalted hash of a phone number or a postcode is undone by hashing "
        "every possible value, and an anonymized column combined with "
        "quasi-identifiers can still single out a person; for the model, a "
        "hashed identifier also works exactly like the identifier. This "
        "screening is an aid, not a privacy review: it defers to applicable law "
        "and to the organisation's privacy practice.",
        "columns:\n"
        "  customer_phone:\n"
        "    anonymized: {method: hash, salted: false}\n"
        "  home_postcode:\n"
        "    quasi_identifier: true\n",
        "Use a salted or keyed hash, or a token whose key is kept outside the "
        "training data, and do not give anonymized identifiers to the model. Ask "
        "the privacy officer which treatment the data requires.",
    },

    /* ---- 4.5 preparation and splitting ---- */
    EXPLAIN(FIT_BEFORE_SPLIT) = {
        "A pipeline step whose parameters are estimated (scale, impute, encode, "
        "select, reduce, discretize, clip, custom) with fit: all_rows.",
        "The step's parameters (a mean, a median, the chosen columns) are then "
        "computed with the test rows included, so the test rows shape the model "
        "that is evaluated on them. The effect is small for scaling and large for "
        "feature selection; in every case validation no longer measures "
        "performance on unseen rows.",
        "pipeline:\n"
        "  - step: impute\n"
        "    fit: all_rows\n"
        "    columns: [pressure_bar]\n"
        "  - step: select\n"
        "    fit: all_rows\n",
        "Fit the step on the training rows (fit: training) or within each fold "
        "(fit: fold), and apply the fitted parameters to the test rows.",
    },
    EXPLAIN(RESAMPLE_BEFORE_SPLIT) = {
        "A resample step (oversampling, undersampling, synthetic rows) with "
        "fit: all_rows.",
        "Oversampling before the split puts copies or near-copies of a row on "
        "both sides of it, so the model is tested on rows it was trained on. "
        "Validation scores then rise with the amount of resampling, not with the "
        "model's skill.",
        "pipeline:\n"
        "  - step: resample\n"
        "    fit: all_rows\n"
        "    description: oversample late returns to 1:1\n",
        "Resample the training rows only (fit: training, or fit: fold in "
        "cross-validation) and evaluate on rows in their natural proportions.",
    },
    EXPLAIN(TARGET_ENCODING_IN_SAMPLE) = {
        "A target_encode step fitted on training rather than out of fold "
        "(fit: fold).",
        "Encoding a category by the mean target of the training rows puts each "
        "row's own label into its encoding, most strongly for rare categories. "
        "The model learns to trust the encoding more than it deserves, and is "
        "over-confident on new rows, whose encodings do not contain their own "
        "labels.",
        "pipeline:\n"
        "  - step: target_encode\n"
        "    fit: training\n"
        "    columns: [bakery_branch]\n",
        "Fit the encoding out of fold (fit: fold): each training row is encoded "
        "from the other folds, and test rows use the encoding fitted on all "
        "training rows.",
    },
    EXPLAIN(RANDOM_SPLIT_TEMPORAL) = {
        "Every split with method: random or group. Each row is dated by its "
        "prediction moment, an event in time, whether or not the table holds "
        "its timestamp; the note names the column that carries it "
        "(prediction.moment_column) when one is declared.",
        "A random split puts rows from later periods into training and earlier "
        "ones into test, so the model learns from the future of the rows it is "
        "tested on: trends, seasons, a change of tariff. Production always "
        "predicts forward in time, and the validation score overstates it.",
        "prediction:\n"
        "  moment: rental_started\n"
        "  target: returned_late\n"
        "  moment_column: rental_start_ts\n"
        "split:\n"
        "  method: random\n"
        "  folds: 5\n",
        "Split by time (method: time with a time_column, or group_time) so that "
        "every test row is later than every training row, with a gap at least "
        "as long as the label horizon.",
    },
    EXPLAIN(SPLIT_GAP_SHORT) = {
        "A time or group_time split whose gap is shorter than the label horizon, "
        "the upper bound of label_known minus the moment, unless the split "
        "declares purge: true.",
        "A training row's label is settled up to one horizon after its moment, "
        "so the labels of the last training rows describe what happened during "
        "the test period, and training learns from it. Removing the training "
        "rows whose labels overlap the test period (purging) and leaving a gap "
        "after the boundary (embargo) prevents this (López de Prado, 2018, "
        "\"Advances in Financial Machine Learning\").",
        "prediction:\n"
        "  moment: loan_requested\n"
        "  target: returned_late\n"
        "  label_known: loan_closed\n"
        "events:\n"
        "  loan_requested: {}\n"
        "  loan_closed:\n"
        "    after: {loan_requested: [P7D, P42D]}\n"
        "split:\n"
        "  method: time\n"
        "  time_column: requested_at\n"
        "  gap: P7D\n",
        "Set gap to at least the label horizon (here P42D), declare purge: true "
        "when the training rows whose labels overlap the test period are "
        "dropped, or settle the label sooner so that the horizon is shorter. "
        "With folds, embargo: DURATION keeps the rows just after each test "
        "period out of training.",
    },
    EXPLAIN(ENTITY_STRADDLES_SPLIT) = {
        "The schema declares prediction.entity (a customer, a bicycle, a "
        "property) and the split is neither group nor group_time.",
        "Rows of one entity share traits the model can memorise, such as a "
        "bicycle's fault history or a household's consumption. When one entity "
        "is in training and in test, validation rewards recognising it rather "
        "than predicting for entities the model has not seen.",
        "prediction:\n"
        "  moment: rental_started\n"
        "  target: returned_late\n"
        "  entity: bike_id\n"
        "split:\n"
        "  method: time\n"
        "  time_column: rental_start_ts\n",
        "Split by group (method: group or group_time, grouped by the entity). "
        "If the model will only ever be used for entities it has seen, waive the "
        "rule with that reason.",
    },

    /* ---- 4.6 waivers ---- */
    EXPLAIN(WAIVER_WITHOUT_REASON) = {
        "A waive entry without a reason, or with an empty one.",
        "A waiver silences a diagnostic. Without a reason, reviewers cannot tell "
        "a considered decision from a way to make the check pass, and nobody can "
        "revisit the decision later.",
        "columns:\n"
        "  reminder_channel:\n"
        "    known: reminder_sent\n"
        "    waive:\n"
        "      - rule: maybe-after-moment\n",
        "Write the reason (what was checked and why the finding is accepted) "
        "and, preferably, an expires date.",
    },
    EXPLAIN(WAIVER_EXPIRED) = {
        "A waiver whose expires date has passed. The diagnostic it waived is "
        "reported again.",
        "Waivers are granted for a time: until a source keeps history, until a "
        "pipeline is fixed. An expired waiver means that the condition was due "
        "to be revisited and the finding is live again.",
        "columns:\n"
        "  flour_price_eur:\n"
        "    source: flour_prices\n"
        "    waive:\n"
        "      - rule: join-latest-value\n"
        "        reason: supplier sends dated price lists from the third quarter\n"
        "        expires: 2024-09-30\n",
        "Fix the finding, or renew the waiver with a new date and an updated "
        "reason.",
    },
    EXPLAIN(WAIVER_UNUSED) = {
        "A waiver that matched no diagnostic in this run.",
        "Either the problem it covered has been fixed, or the waiver names the "
        "wrong rule or sits on the wrong column, and the diagnostic it was meant "
        "for is still reported elsewhere. A stale waiver would also hide the "
        "same problem if it came back.",
        "columns:\n"
        "  loaves_sold_yesterday:\n"
        "    known: previous_close\n"
        "    waive:\n"
        "      - rule: after-moment\n"
        "        reason: read from the till at closing time before March\n",
        "Remove the waiver, or move it to the column and rule it was meant for.",
    },

    /* ---- 4.7 data checks ---- */
    EXPLAIN(COLUMN_NOT_IN_SCHEMA) = {
        "A column in the data file's header that the schema does not declare.",
        "An undeclared column has no role and no timing, so none of the checks "
        "cover it. If the training code uses every column of the file, it "
        "reaches the model unchecked.",
        "columns:\n"
        "  parcel_weight_kg:\n"
        "    known: parcel_collected\n"
        "# parcels.csv header: parcel_weight_kg,delivery_attempts\n",
        "Declare the column with its role and timing, mark it role: excluded, or "
        "drop it from the file.",
    },
    EXPLAIN(COLUMN_NOT_IN_DATA) = {
        "A column the schema declares that the data file's header does not "
        "contain.",
        "Either the schema describes another version of the table or the column "
        "was renamed. Either way the data checks cannot cover it, and the "
        "timing declared for it may describe a column that no longer exists.",
        "columns:\n"
        "  pipe_age_years:\n"
        "    known: pipe_laid\n"
        "# mains.csv header: pipe_material,pipe_age\n",
        "Use the same column names in the schema and the data, or remove the "
        "declaration of a column that no longer exists.",
    },
    EXPLAIN(VALUE_MISMATCH) = {
        "Values that do not parse as the column's declared type or do not match "
        "its format. The message gives the count and the first CSV line.",
        "When the data contradicts a column's type or format, the annotation "
        "describes a different column from the one in the file, and its timing "
        "may be just as wrong. Placeholders such as \"pending\" in a number "
        "column can also stand for outcomes that are recorded later.",
        "columns:\n"
        "  ride_km:\n"
        "    type: number\n"
        "    known: bike_returned\n"
        "# rentals.csv line 18: ride_km is \"pending\"\n",
        "Correct the type or the pattern, or clean the values upstream, writing "
        "missing values as empty fields.",
    },
    EXPLAIN(LONE_FEATURE_SEPARATES) = {
        "A single feature that on its own predicts the target almost perfectly "
        "in the data sample. For a numeric feature and a binary target the "
        "measure is the ROC AUC, against the rulebook's separation_auc; for a "
        "categorical feature it is the uncertainty coefficient U(target given "
        "feature), against uncertainty. Like missingness-predicts and "
        "identifier-segment-predicts it is computed on at most --max-rows rows "
        "(default 1,000,000): on a larger table a seeded sample of about as "
        "many, the same rows every run, in a CSV file and in a database alike.",
        "Genuine predictors are rarely that strong alone; a feature that is "
        "usually is the outcome in disguise, recorded after it or computed from "
        "it. The AUC is the Mann-Whitney U statistic divided by the product of "
        "the two class sizes: the probability that a random positive row ranks "
        "above a random negative one. The uncertainty coefficient is the share "
        "of the target's entropy that the feature removes, I(target; feature) / "
        "H(target).",
        "prediction:\n"
        "  moment: leak_alert_raised\n"
        "  target: leak_confirmed\n"
        "columns:\n"
        "  leak_confirmed:\n"
        "    role: target\n"
        "    type: boolean\n"
        "    known: crew_report_filed\n"
        "  repair_hours:\n"
        "    type: number\n"
        "    known: leak_alert_raised\n"
        "# repair_hours is above zero exactly when leak_confirmed is true\n",
        "Check when the feature's value really exists; usually it is late and "
        "must be dropped or replaced. If it is a genuine predictor known at the "
        "moment, waive the rule with that reason.",
    },
    EXPLAIN(MISSINGNESS_PREDICTS) = {
        "Whether a feature's value is missing predicts the target: the ROC AUC "
        "of the missing-value indicator against a binary target reaches the "
        "rulebook's missingness_auc.",
        "A value that is filled in only once the outcome is known (an inspection "
        "date recorded only for confirmed leaks) leaks through its absence, even "
        "when the values themselves carry nothing. Imputation does not remove "
        "the signal: the model learns the imputed value instead.",
        "columns:\n"
        "  inspection_date:\n"
        "    type: date\n"
        "    known: leak_alert_raised\n"
        "# inspection_date is empty for nearly every unconfirmed alert\n",
        "Find out when the value is written. If missing means \"has not happened "
        "yet\", the column is late; otherwise make sure values go missing in "
        "production in the same way as in training.",
    },
    EXPLAIN(IDENTIFIER_SEGMENT_PREDICTS) = {
        "A segment of an identifier predicts the target: a named group of its "
        "format, or a position found by splitting the values into runs of "
        "letters and digits. The measure is the uncertainty coefficient, against "
        "the rulebook's segment_uncertainty.",
        "Identifiers are often issued by the process that produces the outcome: "
        "a letter for re-delivered parcels, a number range for loans renewed "
        "after a reminder. A model given the identifier, or anything derived from "
        "it, reads the outcome from it.",
        "columns:\n"
        "  parcel_number:\n"
        "    role: identifier\n"
        "    format: '^(?<depot>[A-Z]{3})(?<kind>[RN])[0-9]{8}$'\n"
        "# kind is R for re-deliveries, and almost all of them are late\n",
        "Keep the identifier and its parts out of the features. If a segment is "
        "legitimately known at the moment, declare it as a column of its own "
        "with its own timing.",
    },
    EXPLAIN(TIMESTAMP_AFTER_MOMENT) = {
        "Rows whose value in a timestamp column is later than their value in "
        "prediction.moment_column. The message gives the count and the first "
        "CSV line.",
        "A row that records an event after its own prediction moment shows that "
        "the table was built with values from the future, whatever the schema "
        "declares. The data contradicts the declared timing of that column.",
        "prediction:\n"
        "  moment: rental_started\n"
        "  target: returned_late\n"
        "  moment_column: rental_start_ts\n"
        "columns:\n"
        "  rental_start_ts:\n"
        "    role: timestamp\n"
        "    type: timestamp\n"
        "  last_service_ts:\n"
        "    role: timestamp\n"
        "    type: timestamp\n"
        "    known: bike_serviced\n",
        "Rebuild the table so that each row takes the last value before its "
        "moment (an as-of join on the moment column), then check the column's "
        "known.",
    },
    EXPLAIN(ROWS_SHARED_ACROSS_SPLIT) = {
        "Identical feature rows both in training and in test, according to "
        "split.column.",
        "Duplicated rows on both sides let the model be tested on rows it was "
        "trained on, so validation measures memory, not prediction. Duplicates "
        "usually come from joins that multiply rows, from resampling before the "
        "split, or from repeated snapshots of the same entity.",
        "split:\n"
        "  method: predefined\n"
        "  column: fold\n"
        "columns:\n"
        "  fold:\n"
        "    role: split\n"
        "# loans.csv: lines 12 and 4031 hold the same features, in train and in test\n",
        "Remove duplicates before splitting, or split by a group that keeps "
        "copies together.",
    },
    EXPLAIN(ENTITY_IN_BOTH_SPLITS) = {
        "One entity (prediction.entity) has rows in training and in test, "
        "according to split.column.",
        "The model can learn an entity's identity from its other features and "
        "recognise it in the test rows. Validation then rewards memory of known "
        "entities, while production may mostly see new ones.",
        "prediction:\n"
        "  moment: order_placed\n"
        "  target: order_cancelled\n"
        "  entity: shop_id\n"
        "split:\n"
        "  method: predefined\n"
        "  column: fold\n"
        "columns:\n"
        "  shop_id:\n"
        "    role: identifier\n"
        "  fold:\n"
        "    role: split\n",
        "Assign whole entities to one side (a group split on the entity). If the "
        "model will only be used for entities seen in training, waive the rule "
        "with that reason.",
    },
    EXPLAIN(SMALL_QUASI_IDENTIFIER_GROUPS) = {
        "In the data (every row, not a sample), the combination of all columns "
        "marked quasi_identifier: true leaves groups of rows smaller than the "
        "rulebook's min_group_size, k.",
        "A table is k-anonymous when every combination of quasi-identifier "
        "values is shared by at least k rows (Sweeney, 2002); a smaller group "
        "can single out a person once the table is linked with other data, as a "
        "postcode, a birth year and a membership tier may identify one rider. "
        "This screening is an aid, not a privacy review: it looks at one file "
        "and defers to applicable law and to the organisation's privacy "
        "practice.",
        "columns:\n"
        "  home_postcode:\n"
        "    quasi_identifier: true\n"
        "  birth_year:\n"
        "    quasi_identifier: true\n"
        "  membership_tier:\n"
        "    quasi_identifier: true\n",
        "Generalise values (a postcode district instead of a postcode, an age "
        "band instead of a birth year) or drop a quasi-identifier, and ask the "
        "privacy officer which treatment the data requires.",
    },
    EXPLAIN(CSV_MALFORMED) = {
        "A data file given with --data that is not well-formed RFC 4180 CSV: "
        "for example a quote that is never closed or that stands inside an "
        "unquoted field, or a row with a different number of fields from the "
        "header. The message gives the line.",
        "Statistics over a misread file measure the wrong thing: a shifted field "
        "puts one column's values under another column's name, which can hide a "
        "leak or report one that is not there. Only a file read as it was "
        "written gives meaningful data checks.",
        "columns:\n"
        "  title:\n"
        "    type: text\n"
        "  loan_days:\n"
        "    type: number\n"
        "# loans.csv line 7: 1042,\"The Long Way Home,14\n"
        "# (the quote before The Long Way Home is never closed)\n",
        "Write the file with a CSV writer that quotes fields containing commas, "
        "quotes or line breaks and doubles embedded quotes, and check that every "
        "row has as many fields as the header.",
    },
};

_Static_assert(sizeof texts / sizeof texts[0] == KN_RULE_COUNT,
               "explain.c: the last rule of rules.def has no explanation");

/* Returns the explanation of rule r (static storage, never freed), or NULL
 * when r is not a rule.  Every rule has all four texts; tests/unit/
 * test_explain.c checks that no entry in the middle of the table is left
 * out. */
const kn_explain_text *kn_rule_explain(kn_rule r)
{
    if ((unsigned)r >= (unsigned)KN_RULE_COUNT) {
        return NULL;
    }
    return &texts[r];
}
