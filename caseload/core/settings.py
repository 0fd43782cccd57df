"""Clinic protocol: every threshold the engine and the alert rules use, with its default and source.

A clinic may override any of them in a TOML file (see `caseload protocol show`). The rules never
read globals: they receive a `Protocol` instance.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields


CALLER_MESSAGE_MAX = 200


def setting(default, source: str, lo: float | None = None, hi: float | None = None, doc: str = ""):
    """A protocol field with its documentation, its source and the accepted range."""
    return field(default=default, metadata={"source": source, "lo": lo, "hi": hi, "doc": doc})


@dataclass(frozen=True)
class Protocol:
    # --- cycle statistics and classification
    stats_cycles: int = setting(12, "common practice", 3, 36, "complete cycles used for statistics")
    min_cycles_classify: int = setting(3, "common practice", 2, 12, "complete cycles needed before FIGO classification")
    figo_frequent_below: int = setting(24, "FIGO 2018 (Munro 2018)", 15, 30, "cycle length (days) below which cycles are frequent")
    figo_infrequent_above: int = setting(38, "FIGO 2018 (Munro 2018)", 30, 60, "cycle length (days) above which cycles are infrequent")
    figo_variation_young_old: int = setting(9, "FIGO 2018 (Munro 2018), age 18-25 and 42-45", 3, 20, "normal shortest-to-longest variation (days) at 18-25 and 42-45")
    figo_variation_mid: int = setting(7, "FIGO 2018 (Munro 2018), age 26-41", 3, 20, "normal shortest-to-longest variation (days) at 26-41")
    figo_prolonged_bleed_above: int = setting(8, "FIGO 2018 (Munro 2018)", 5, 14, "bleed length (days) above which flow is prolonged")
    bleed_merge_dry_days: int = setting(2, "common practice", 0, 5, "dry days allowed inside one bleed")
    min_cycle_days: int = setting(10, "from memory", 5, 20, "shortest cycle (days); a flow sooner is intermenstrual")
    lochia_days: int = setting(42, "common practice (lochia up to 6 weeks)", 7, 90, "days after a pregnancy in which bleeding is lochia")

    # --- population priors for prediction
    prior_cycle_mean: float = setting(28.9, "Fehring 2006", 21, 40, "population mean cycle length (days)")
    prior_cycle_sd: float = setting(3.4, "Fehring 2006", 1, 10, "population SD of cycle length (days)")
    prior_cycle_within_sd: float = setting(2.5, "Fehring 2006 (split from memory)", 0.5, 8, "usual SD of one woman's cycle lengths (days)")
    prior_luteal_mean: float = setting(14.13, "Lenton 1984", 9, 17, "population mean luteal length (days)")
    prior_luteal_sd: float = setting(1.41, "Lenton 1984", 0.5, 5, "population SD of luteal length (days)")
    prior_luteal_within_sd: float = setting(1.0, "from memory", 0.3, 5, "usual SD of one woman's luteal lengths (days)")
    prior_weight_cycles: float = setting(3.0, "common practice", 0, 24, "cycles' worth of weight of the usual within-woman SD")
    earliest_ovulation_day: int = setting(8, "common practice", 4, 12, "earliest cycle day ovulation is put on")
    late_ovulation_share: float = setting(0.05, "Wilcox 2000 (4-6% fertile in week 5)", 0, 0.2, "share of cycles ovulating on any day, whatever the pattern")
    late_ovulation_last_day: int = setting(42, "common practice (six weeks)", 28, 90, "latest cycle day a sporadic late ovulation reaches")
    luteal_conflict_below: int = setting(7, "ASRM 2021 (typical 11-17 days)", 3, 10, "shorter luteal phases (days) are dating conflicts, not learnt")
    luteal_conflict_above: int = setting(20, "ASRM 2021 (typical 11-17 days)", 17, 30, "longer luteal phases (days) are dating conflicts, not learnt")
    fertile_window_days: int = setting(6, "Wilcox 1995", 3, 10, "days of the fertile window, ending on ovulation")
    calendar_rule_min_cycles: int = setting(6, "Ogino-Knaus calendar rule (WHO Global Handbook)", 3, 12, "cycles needed before the calendar rule is shown")
    lh_to_ovulation_days: int = setting(1, "WHO Task Force 1980 (median 32 h from LH rise)", 0, 3, "days from the first positive LH test to ovulation")
    lh_positive_iu_l: float = setting(25.0, "common practice", 5, 100, "urinary LH (IU/L) counted as a positive test")

    # --- thermal shift
    shift_rule: int = setting(1, "Miolo 1993; Marshall 1968", 1, 2, "1: three-over-six as published; 2: coverline form")
    shift_low_days: int = setting(6, "Miolo 1993; Marshall 1968", 3, 10, "readings the highs must exceed")
    shift_spike_c: float = setting(0.2, "Miolo 1993 (WHO multicentre study)", 0.1, 0.6, "a low this far (C) above both neighbours is a spike")
    shift_quick_rise_c: float = setting(0.25, "common practice (simulated charts)", 0.05, 0.6, "mean rise (C) of three highs over the six: confirms")
    shift_level_rise_c: float = setting(0.2, "WHO Global Handbook (rise 0.2-0.5 C)", 0.05, 0.6, "mean rise (C) of four highs over the six: confirms")
    shift_rise_c: float = setting(0.2, "coverline form (common practice)", 0.05, 0.6, "coverline form: first high's rise (C) over the lows")
    coverline_above_c: float = setting(0.1, "coverline form (common practice)", 0.0, 0.5, "coverline form: coverline (C) above the highest low")
    shift_confirm_readings: int = setting(3, "Miolo 1993; Marshall 1968", 2, 5, "consecutive high readings that confirm")
    change_point_min_delta_c: float = setting(0.2, "WHO Global Handbook (rise 0.2-0.5 C)", 0.05, 0.6, "level difference (C) for a change point to count")
    change_point_min_strength: float = setting(2.0, "common practice", 0.5, 10, "level difference in noise SDs for a change point to count")

    # --- alert thresholds
    window_approaching_p: float = setting(0.2, "common practice", 0.01, 0.99, "P(fertile) that makes the window approach")
    window_approaching_days: int = setting(3, "common practice", 1, 10, "days ahead the window-approaching alert looks")
    window_open_p: float = setting(0.5, "common practice", 0.05, 0.99, "P(fertile) today that opens the window")
    window_open_share_of_peak: float = setting(0.8, "common practice", 0.3, 1.0, "flat curve: share of its peak that opens the window")
    no_shift_grace_days: int = setting(3, "common practice", 0, 14, "days past the upper ovulation bound before no-thermal-shift")
    min_reading_coverage: float = setting(0.7, "common practice", 0.1, 1.0, "share of days with a valid reading for thermal alerts")
    short_luteal_max_days: int = setting(10, "ASRM 2021", 7, 12, "luteal length (days) at or below which it is short")
    overdue_after_shift_days: int = setting(17, "ASRM 2021 (luteal range up to 17 days)", 12, 25, "days after a shift with no bleed before the period is overdue")
    sustained_high_days: int = setting(18, "common practice", 14, 30, "days above the coverline that suggest pregnancy")
    amenorrhoea_days: int = setting(90, "FIGO 2018 (90 days from memory)", 60, 365, "days without a bleed for amenorrhoea")
    hcg_min_rise_48h: float = setting(0.53, "Barnhart 2004 (Morse 2012: 0.35)", 0.1, 2.0, "minimum serum hCG rise per 48 h (fraction), scaled log-linearly")
    hcg_pair_min_hours: int = setting(24, "common practice", 12, 48, "shortest gap (h) between two hCG values compared")
    hcg_pair_max_hours: int = setting(72, "common practice", 48, 168, "unused (every pair 24 h or more apart is compared)")
    hcg_fit_days: int = setting(7, "common practice", 2, 14, "days of serum hCG values used by the log-linear fit")
    hcg_baseline_iu_l: float = setting(5.0, "common practice (under 5 IU/L is negative)", 1, 25, "serum hCG (IU/L) below which a pregnancy has ended")
    trigger_hcg_days: int = setting(14, "common practice (exogenous hCG)", 0, 21, "days after a trigger a positive urine hCG is the trigger's")
    intermenstrual_alert_days: int = setting(3, "common practice", 1, 14, "days of bleeding between periods in a cycle that alert")
    intermenstrual_heavy_days: int = setting(1, "common practice", 1, 14, "heavy days of bleeding between periods in a cycle that alert")
    mature_follicle_mm: float = setting(14.0, "Evans 2020", 10, 20, "follicle diameter (mm) counted as mature")
    max_mature_follicles: int = setting(2, "Evans 2020 (under 40 years)", 1, 5, "mature follicles allowed before the multiple-follicles alert")
    multiple_follicle_rule: int = setting(1, "Evans 2020; Thessaloniki 2008 (from memory)", 1, 2, "multiple follicles rule: 1 Evans, 2 Thessaloniki (>2 at 16 mm)")
    cyst_mm: float = setting(25.0, "from memory", 20, 40, "unchanged on two scans, this size (mm) is a possible cyst")
    trigger_follicle_mm: float = setting(18.0, "common practice", 14, 25, "lead follicle diameter (mm) at which a trigger is planned")
    logging_gap_days: int = setting(3, "common practice", 1, 14, "days with no entry that make a logging gap")
    plausible_temp_low_c: float = setting(35.5, "from memory", 34.0, 37.0, "lowest basal temperature (C) saved without a second look")
    plausible_temp_high_c: float = setting(38.5, "from memory", 37.0, 42.0, "highest basal temperature (C) saved without a second look")
    fever_c: float = setting(38.0, "common practice", 37.5, 39.5, "temperature (C) counted as a fever")
    alert_lookback_days: int = setting(14, "common practice", 1, 90, "days back a fever reading is still raised when first seen")
    mass_resolve_share: float = setting(0.5, "common practice", 0.1, 1.0, "share of the unresolved alerts above which one refresh's auto-resolutions stop it")
    mass_resolve_min: int = setting(5, "common practice", 1, 1000, "auto-resolutions one refresh may always make, whatever the share")

    # --- what phone staff say
    caller_message: str = setting(
        "Your nurse has been told and will call you back; if you feel unwell, call the clinic or your usual "
        "emergency number.", "common practice", doc="what phone staff tell a caller with a clinical alert open")

    # Which stored version of the clinic's protocol this is; None when not read from a store. Not a setting.
    version: int | None = field(default=None, compare=False, metadata={"setting": False})


SETTINGS = tuple(f for f in fields(Protocol) if f.metadata.get("setting", True))


DEFAULT_PROTOCOL = Protocol()
