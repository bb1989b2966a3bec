"""Co-site interference: harmonics, intermodulation and the margin arithmetic.

Checks: brute force by dense sampling (independent of the interval arithmetic), frequencies worked
by hand (the arithmetic is in the comments), and a published interference-level example
(tests/reference/cept_irss_unwanted.csv, source in its header).
"""
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from registry.physics import cosite

REF = Path(__file__).parent / "reference"

GNSS_L1_MHZ = (1574.397, 1576.443)   # 1575.42 ± 1.023 MHz, the shipped gnss_l1 band
VHF_COM_25 = (118.0, 136.975, 25.0)  # 25 kHz channels, 118.000 to 136.975 MHz
VHF_COM_833 = (118.0, 136.975, 8.333)  # 8.33 kHz channels: 25/3 kHz (ED-23C's definition)


# --- harmonics: worked by hand ------------------------------------------------------------------

def test_vhf_com_harmonics_into_gnss_l1_25_khz_channels():
    """Worked by hand, no published source for the numbers.

    13th harmonic: 1574.397 / 13 = 121.10746, 1576.443 / 13 = 121.26485 MHz. On the 25 kHz grid the
    first channel at or above 121.10746 is 121.125 (121.100 × 13 = 1574.300 < 1574.397) and the last
    at or below 121.26485 is 121.250 (121.275 × 13 = 1576.575 > 1576.443): 121.125, 121.150, ...,
    121.250 = 6 channels; 121.125 × 13 = 1574.625, 121.250 × 13 = 1576.250 MHz.
    12th harmonic: 1574.397 / 12 = 131.19975, 1576.443 / 12 = 131.37025 MHz: channels 131.200 to
    131.350 (131.375 × 12 = 1576.500 is out) = 7 channels; 131.200 × 12 = 1574.400, 131.350 × 12 =
    1576.200 MHz. 11th: 1574.397 / 11 = 143.13 > 136.975; 14th: 1576.443 / 14 = 112.60 < 118: none.
    """
    hits = cosite.channel_harmonic_hits(VHF_COM_25, GNSS_L1_MHZ, max_order=20)
    assert [h.order for h in hits] == [12, 13]
    h12, h13 = hits
    assert (h13.first_channel_mhz, h13.last_channel_mhz, h13.channel_count) == \
        pytest.approx((121.125, 121.250, 6), abs=1e-9)
    assert (h13.product_lo_mhz, h13.product_hi_mhz) == pytest.approx((1574.625, 1576.250), abs=1e-9)
    assert (h12.first_channel_mhz, h12.last_channel_mhz, h12.channel_count) == \
        pytest.approx((131.200, 131.350, 7), abs=1e-9)
    assert (h12.product_lo_mhz, h12.product_hi_mhz) == pytest.approx((1574.400, 1576.200), abs=1e-9)


def test_vhf_com_13th_harmonic_into_gnss_l1_833_khz_channels():
    """Worked by hand, no published source for the numbers.

    8.33 kHz spacing is 25/3 kHz = 1/120 MHz, so channel k is 118 + k/120 MHz (k = 0..2277).
    13th harmonic: (121.10746 − 118) × 120 = 372.90 → k = 373 → 118 + 373/120 = 121.108333 MHz;
    (121.26485 − 118) × 120 = 391.78 → k = 391 → 121.258333 MHz; 391 − 373 + 1 = 19 channels.
    Products: 121.108333 × 13 = 1574.408333, 121.258333 × 13 = 1576.358333 MHz.
    """
    hits = {h.order: h for h in cosite.channel_harmonic_hits(VHF_COM_833, GNSS_L1_MHZ, 20)}
    h13 = hits[13]
    assert h13.first_channel_mhz == pytest.approx(118 + 373 / 120, abs=1e-9)
    assert h13.last_channel_mhz == pytest.approx(118 + 391 / 120, abs=1e-9)
    assert h13.channel_count == 19
    assert (h13.product_lo_mhz, h13.product_hi_mhz) == \
        pytest.approx((1574.408333, 1576.358333), abs=1e-6)
    assert cosite.channel_count(*VHF_COM_833) == 2278  # 18.975 MHz × 120 + 1


def test_continuous_range_harmonic_is_the_band_divided_by_the_order():
    """Worked by hand: n·f ∈ [v_lo, v_hi] ⇔ f ∈ [v_lo/n, v_hi/n] (1574.397/13 = 121.107462)."""
    hits = cosite.harmonic_hits((118.0, 136.975), GNSS_L1_MHZ, 13)
    h13 = hits[-1]
    assert h13.order == 13
    assert (h13.tx_lo_mhz, h13.tx_hi_mhz) == pytest.approx((1574.397 / 13, 1576.443 / 13), rel=1e-12)
    assert (h13.product_lo_mhz, h13.product_hi_mhz) == pytest.approx(GNSS_L1_MHZ, rel=1e-12)
    assert cosite.harmonic_hits((118.0, 136.975), GNSS_L1_MHZ, 11) == []


# --- harmonics: brute force ---------------------------------------------------------------------

_freq = st.floats(min_value=1.0, max_value=2000.0, allow_nan=False)


@st.composite
def _ranges(draw):
    lo = draw(_freq)
    return lo, lo + draw(st.floats(min_value=0.0, max_value=200.0))


@settings(max_examples=60, deadline=None)
@given(tx=_ranges(), victim=_ranges(), max_order=st.integers(min_value=2, max_value=15))
def test_harmonic_hits_match_dense_sampling(tx, victim, max_order):
    """Independent check: sample the transmit range densely; every in-band n·f is covered by the
    reported sub-range of order n, and every reported range lies in the band and in the transmit range."""
    hits = {h.order: h for h in cosite.harmonic_hits(tx, victim, max_order)}
    f = np.linspace(tx[0], tx[1], 2001)
    for n in range(2, max_order + 1):
        inside = f[(n * f >= victim[0]) & (n * f <= victim[1])]
        if n in hits:
            h = hits[n]
            assert victim[0] - 1e-9 <= h.product_lo_mhz <= h.product_hi_mhz <= victim[1] + 1e-9
            assert tx[0] - 1e-9 <= h.tx_lo_mhz <= h.tx_hi_mhz <= tx[1] + 1e-9
            assert h.product_lo_mhz == pytest.approx(n * h.tx_lo_mhz)
            assert np.all((inside >= h.tx_lo_mhz - 1e-9) & (inside <= h.tx_hi_mhz + 1e-9))
        else:
            assert inside.size == 0


@settings(max_examples=40, deadline=None)
@given(first=st.floats(min_value=100.0, max_value=200.0), channels=st.integers(min_value=1, max_value=400),
       step_khz=st.sampled_from([25.0, 8.333, 50.0, 100.0, 1000.0]), victim=_ranges(),
       max_order=st.integers(min_value=2, max_value=15))
def test_channel_hits_match_channel_by_channel(first, channels, step_khz, victim, max_order):
    """Independent check: walk every channel of the plan and every order; the channels whose harmonic
    is in the band are exactly the reported first..last run, and nothing else is reported."""
    exact_step_mhz = (25.0 / 3 if step_khz == 8.333 else step_khz) / 1000.0
    last = first + (channels - 1) * exact_step_mhz
    plan = (first, last, step_khz) if channels > 1 else (first, first, step_khz)
    grid = first + exact_step_mhz * np.arange(channels)
    hits = {h.order: h for h in cosite.channel_harmonic_hits(plan, victim, max_order)}
    for n in range(2, max_order + 1):
        product = n * grid
        # a product within 1e-7 MHz of a band edge is a rounding tie: leave it out of the comparison
        clear = (np.abs(product - victim[0]) > 1e-7) & (np.abs(product - victim[1]) > 1e-7)
        inside = (product >= victim[0]) & (product <= victim[1])
        if n in hits:
            h = hits[n]
            assert victim[0] - 1e-7 <= h.product_lo_mhz <= h.product_hi_mhz <= victim[1] + 1e-7
            reported = (grid >= h.first_channel_mhz - 1e-9) & (grid <= h.last_channel_mhz + 1e-9)
            assert np.array_equal(reported[clear], inside[clear])
            assert h.channel_count == int(np.count_nonzero(reported))
        else:
            assert not np.any(inside & clear)


# --- intermodulation: worked by hand ------------------------------------------------------------

def test_third_and_fifth_order_intermod_worked_by_hand():
    """Worked by hand, no published source. Two VHF transmitters, f1 in 124–125 MHz, f2 in 131–132 MHz,
    victim the VOR/localizer band 108–117.975 MHz.

    2f1 − f2: [248, 250] − [131, 132] = [116, 119] → in band [116, 117.975].
      f1: 2f1 ∈ [108 + 131, 117.975 + 132] = [239, 249.975] → f1 ∈ [119.5, 124.9875] ∩ [124, 125]
          = [124, 124.9875];  f2: f2 ∈ [248 − 117.975, 250 − 108] = [130.025, 142] ∩ = [131, 132].
    3f1 − 2f2: [372, 375] − [262, 264] = [108, 113], all in band.
      f1: 3f1 ∈ [108 + 262, 117.975 + 264] → f1 ∈ [123.333, 127.325] ∩ = [124, 125];
      f2: 2f2 ∈ [372 − 117.975, 375 − 108] = [254.025, 267] → f2 ∈ [127.0125, 133.5] ∩ = [131, 132].
    Every other product misses: 2f2 − f1 = [137, 140]; 3f2 − 2f1 = [143, 148]; 4f1 − f2 = [364, 369];
    4f2 − f1 = [399, 404]; sums are above 370; f1 − 2f2, 2f1 − 3f2, ... are negative.
    """
    hits = cosite.intermod_hits((124.0, 125.0), (131.0, 132.0), (108.0, 117.975), orders=(3, 5))
    assert [(h.a, h.b) for h in hits] == [(2, -1), (3, -2)]
    third, fifth = hits
    assert third.label == "2·f1 − f2" and third.order == 3
    assert (third.product_lo_mhz, third.product_hi_mhz) == pytest.approx((116.0, 117.975))
    assert (third.f1_lo_mhz, third.f1_hi_mhz) == pytest.approx((124.0, 124.9875))
    assert (third.f2_lo_mhz, third.f2_hi_mhz) == pytest.approx((131.0, 132.0))
    assert fifth.label == "3·f1 − 2·f2" and fifth.order == 5
    assert (fifth.product_lo_mhz, fifth.product_hi_mhz) == pytest.approx((108.0, 113.0))
    assert (fifth.f1_lo_mhz, fifth.f1_hi_mhz, fifth.f2_lo_mhz, fifth.f2_hi_mhz) == \
        pytest.approx((124.0, 125.0, 131.0, 132.0))


def test_coefficient_pairs_cover_differences_and_sums():
    """Third order: 2f1 ± f2, f1 ± 2f2 and the reversed differences 2f2 − f1, f2 − 2f1 (SM.329 §1.1.3)."""
    assert sorted(cosite.coefficient_pairs(3)) == sorted([(1, 2), (1, -2), (-1, 2), (2, 1), (2, -1), (-2, 1)])
    assert len(cosite.coefficient_pairs(5)) == 12
    labels = {cosite.IntermodHit(a, b, 0, 0, 0, 0, 0, 0).label for a, b in cosite.coefficient_pairs(3)}
    assert labels == {"f1 + 2·f2", "f1 − 2·f2", "2·f2 − f1", "2·f1 + f2", "2·f1 − f2", "f2 − 2·f1"}


# --- intermodulation: brute force ---------------------------------------------------------------

@settings(max_examples=50, deadline=None)
@given(r1=_ranges(), r2=_ranges(), victim=_ranges(), orders=st.sampled_from([(3,), (5,), (3, 5), (2, 3, 4, 5)]))
def test_intermod_hits_match_dense_sampling(r1, r2, victim, orders):
    """Independent check on a 161 × 161 grid of (f1, f2): every in-band product a·f1 + b·f2 lies in a
    reported hit for (a, b) with f1, f2 and the product inside the reported ranges; every reported
    range lies in the band and the transmit ranges; and the reported f1 (f2) range's ends really
    produce an in-band product with some f2 (f1) of the other range."""
    hits = {(h.a, h.b): h for h in cosite.intermod_hits(r1, r2, victim, orders)}
    f1, f2 = np.meshgrid(np.linspace(*r1, 161), np.linspace(*r2, 161), indexing="ij")
    tol = 1e-9 * max(r1[1], r2[1], victim[1]) * 10
    for order in orders:
        for a, b in cosite.coefficient_pairs(order):
            product = a * f1 + b * f2
            inside = (product >= victim[0]) & (product <= victim[1])
            h = hits.get((a, b))
            if h is None:
                assert not inside.any()
                continue
            assert victim[0] - tol <= h.product_lo_mhz <= h.product_hi_mhz <= victim[1] + tol
            assert r1[0] - tol <= h.f1_lo_mhz <= h.f1_hi_mhz <= r1[1] + tol
            assert r2[0] - tol <= h.f2_lo_mhz <= h.f2_hi_mhz <= r2[1] + tol
            assert np.all(f1[inside] >= h.f1_lo_mhz - tol) and np.all(f1[inside] <= h.f1_hi_mhz + tol)
            assert np.all(f2[inside] >= h.f2_lo_mhz - tol) and np.all(f2[inside] <= h.f2_hi_mhz + tol)
            assert np.all(product[inside] >= h.product_lo_mhz - tol)
            assert np.all(product[inside] <= h.product_hi_mhz + tol)
            _ends_are_reached(a, b, h, r1, r2, victim, tol)


def _ends_are_reached(a, b, hit, r1, r2, victim, tol):
    """Each end of the reported f1 range, paired with the best f2 of its range, gives an in-band product
    (the product is linear in f2, so its extremes are at f2's ends); likewise for f2."""
    for f in (hit.f1_lo_mhz, hit.f1_hi_mhz):
        values = [a * f + b * g for g in r2]
        assert min(values) <= victim[1] + tol and max(values) >= victim[0] - tol
    for g in (hit.f2_lo_mhz, hit.f2_hi_mhz):
        values = [a * f + b * g for f in r1]
        assert min(values) <= victim[1] + tol and max(values) >= victim[0] - tol


# --- margin -------------------------------------------------------------------------------------

def _cept_rows():
    rows = []
    for line in (REF / "cept_irss_unwanted.csv").read_text(encoding="utf-8").splitlines():
        if line and not line.startswith("#"):
            rows.append([float(x) for x in line.split(",")])
    return rows


@pytest.mark.parametrize("row", _cept_rows())
def test_interfering_level_against_published_example(row):
    """CEPT wiki 'Example of calculations' §4.1 iRSSunwanted (see the reference file's header):
    P = Pe + Att(dBc), iRSS = P + Ge + Gr − L; here with no feeders and coupling = Ge + Gr − L."""
    tx_power_dbm, emission_dbc, gain_tx_dbi, gain_rx_dbi, path_loss_db, level_dbm = row
    result = cosite.interference_margin(tx_power_dbm, emission_dbc, 0.0,
                                        gain_tx_dbi + gain_rx_dbi - path_loss_db, 0.0, threshold_dbm=-100.0)
    assert result.at_receiver_dbm == pytest.approx(level_dbm, abs=0.1)
    assert result.emission_dbm == pytest.approx(tx_power_dbm + emission_dbc)
    assert result.margin_db == pytest.approx(-100.0 - result.at_receiver_dbm)


def test_margin_worked_by_hand_with_feeders():
    """Worked by hand, no published source: a 25 W VHF transmitter (10·log10(25 000 mW) = 43.98 dBm),
    harmonic at −60 dBc → −16.02 dBm at the port; 1.5 dB transmit feeder → −17.52 dBm at the antenna;
    40 dB isolation (coupling −40 dB) → −57.52 dBm at the receive antenna; 2.0 dB receive feeder →
    −59.52 dBm at the receiver. Threshold −120 dBm → margin −120 − (−59.52) = −60.48 dB: not tolerated."""
    tx = cosite.dbm_from_w(25.0)
    assert tx == pytest.approx(43.9794, abs=1e-4)
    m = cosite.interference_margin(tx, -60.0, 1.5, cosite.coupling_from_isolation_db(40.0), 2.0, -120.0)
    assert m.emission_dbm == pytest.approx(-16.0206, abs=1e-4)
    assert m.at_tx_antenna_dbm == pytest.approx(-17.5206, abs=1e-4)
    assert m.at_rx_antenna_dbm == pytest.approx(-57.5206, abs=1e-4)
    assert m.at_receiver_dbm == pytest.approx(-59.5206, abs=1e-4)
    assert m.margin_db == pytest.approx(-60.4794, abs=1e-4)
    assert not m.tolerated
    assert cosite.interference_margin(tx, -60.0, 1.5, -110.0, 2.0, -120.0).tolerated  # 10.48 dB margin


def test_unit_helpers():
    """dBm = 10·log10(P / 1 mW): 1 W = 30 dBm, 250 W = 53.98 dBm; dBc = emission − carrier."""
    assert cosite.dbm_from_w(1.0) == pytest.approx(30.0)
    assert cosite.dbm_from_w(250.0) == pytest.approx(30 + 10 * math.log10(250))
    assert cosite.dbc_from_dbm(-36.0, 44.0) == -80.0
    assert cosite.coupling_from_isolation_db(35.0) == -35.0
    with pytest.raises(ValueError):
        cosite.dbm_from_w(0.0)


def test_suppression_line_excuses_only_a_shared_line():
    """Field notes: DME, transponder and collision avoidance share a suppression line."""
    assert cosite.excused_by_suppression("lband", "lband")
    assert not cosite.excused_by_suppression("lband", None)
    assert not cosite.excused_by_suppression(None, None)
    assert not cosite.excused_by_suppression("lband", "other")


def test_bad_ranges_are_refused():
    with pytest.raises(ValueError):
        cosite.harmonic_hits((130.0, 120.0), GNSS_L1_MHZ, 13)
    with pytest.raises(ValueError):
        cosite.intermod_hits((118.0, 137.0), (118.0, 137.0), (0.0, 10.0))
    with pytest.raises(ValueError):
        cosite.intermod_hits((118.0, 137.0), (118.0, 137.0), (108.0, 118.0), orders=(1,))
    with pytest.raises(ValueError):
        cosite.channel_count(118.0, 137.0, 0.0)


# --- the shipped service table ------------------------------------------------------------------

SHIPPED = Path(__file__).parent.parent / "registry" / "data" / "services.yaml"
COSITE_KEYS = ("tx_bands_mhz", "tx_channel_steps_khz", "tx_peak_power_dbm", "spurious_dbc",
               "rx_bands_mhz", "protection_dbm", "suppression_line", "im3_conversion_loss_db",
               "im5_conversion_loss_db", "max_harmonic_order", "protection_plane")


def _shipped():
    import yaml
    return {s["id"]: s for s in yaml.safe_load(SHIPPED.read_text(encoding="utf-8"))["services"]}


def test_shipped_table_gives_the_hand_worked_gnss_hits():
    """The shipped vhf_com plan and gnss_l1 band give the channels worked by hand above."""
    table = _shipped()
    (first, last), = table["vhf_com"]["tx_bands_mhz"]
    steps = table["vhf_com"]["tx_channel_steps_khz"]
    victim = tuple(table["gnss_l1"]["bands_mhz"][0])
    by_step = {s: {h.order: h for h in cosite.channel_harmonic_hits((first, last, s), victim, 20)} for s in steps}
    assert by_step[25.0][13].channel_count == 6 and by_step[8.333][13].channel_count == 19
    assert by_step[25.0][13].first_channel_mhz == pytest.approx(121.125)
    assert sorted(by_step[25.0]) == sorted(by_step[8.333]) == [12, 13]


def test_every_shipped_cosite_figure_names_its_standing():
    """Every co-site figure has a `sources` entry that starts with its standing (the project's rule
    that what the site shows is sourced, common practice with a reason, or unverified with a document)."""
    standings = ("sourced: ", "common practice, no source: ", "unverified: ")
    for service in _shipped().values():
        for key in COSITE_KEYS:
            if key in service:
                text = service["sources"][key]
                assert text.startswith(standings) and len(text) > 20, (service["id"], key)


def test_shipped_lband_suppression_line():
    """Field notes: DME, transponder and collision avoidance share a suppression line; VHF com does not."""
    table = _shipped()
    lines = {k: table[k].get("suppression_line") for k in ("dme", "transponder", "acas", "vhf_com")}
    assert cosite.excused_by_suppression(lines["dme"], lines["transponder"])
    assert cosite.excused_by_suppression(lines["acas"], lines["dme"])
    assert not cosite.excused_by_suppression(lines["vhf_com"], lines["dme"])
