"""The device library: generic part types with their parameters, spreads and provenance.

Every entry below is "from memory": SPICE model cards and datasheet typical figures as they
are commonly circulated, recalled rather than copied from a document at hand. They are good
for the bias points and responses a build guide quotes; check a datasheet for anything else.
BVEBO is the datasheet's emitter-base rating V(BR)EBO, taken as the voltage where the junction
breaks down (real junctions usually hold a volt or two more).
Spreads give the production range Monte Carlo draws from: BF follows the datasheet hFE
grouping (min..max), VTO the VGS(off) range, IDSS the datasheet IDSS range,
drawn to track VTO (montecarlo.tracking_idss; BETA follows).
"""

from __future__ import annotations

from kitleaf.engine.models import DeviceModel, register_model

_MEMORY = "from memory"


def _diode(name: str, note: str, **params: float) -> DeviceModel:
    return DeviceModel(name, "diode", params, {"IS": (params["IS"] / 2, params["IS"] * 2)},
                       _MEMORY, note)


DIODES = (
    _diode("1N4148", "small-signal silicon switching diode", IS=2.52e-9, N=1.752, RS=0.568,
           CJO=4e-12, M=0.4, VJ=0.75, TT=20e-9, BV=100.0, IBV=100e-6),
    _diode("1N4001", "1 A silicon rectifier", IS=14.11e-9, N=1.984, RS=33.89e-3,
           CJO=25.89e-12, M=0.44, VJ=0.3245, TT=5.7e-6, BV=75.0, IBV=10e-6),
    _diode("1N5817", "1 A Schottky rectifier", IS=31.7e-6, N=1.373, RS=0.051, CJO=190e-12,
           M=0.35, VJ=0.35, BV=20.0, IBV=1e-3),
    _diode("GE-SIGNAL", "germanium point-contact signal diode, 1N34A-like (Vf ~0.3 V at "
           "1 mA)", IS=2e-7, N=1.3, RS=7.0, CJO=1e-12, M=0.33, VJ=0.3, BV=60.0, IBV=15e-6),
    _diode("LED-RED", "5 mm red LED, Vf ~1.8 V at 10 mA", IS=93.2e-12, N=3.73, RS=2.0,
           CJO=2.97e-12, M=0.33, VJ=0.75, BV=5.0, IBV=10e-6),
    _diode("LED-GREEN", "5 mm green (GaP) LED, Vf ~2.1 V at 10 mA", IS=1.5e-11, N=4.0, RS=2.0,
           CJO=3e-12, M=0.33, VJ=0.75, BV=5.0, IBV=10e-6),
    _diode("LED-YELLOW", "5 mm yellow LED, Vf ~2.0 V at 10 mA", IS=1.78e-11, N=3.8, RS=2.0,
           CJO=3e-12, M=0.33, VJ=0.75, BV=5.0, IBV=10e-6),
    # InGaN blue and white (a blue die under a phosphor) LEDs: about 3 V at 10 mA, with a
    # larger series resistance than the red and yellow ones
    _diode("LED-BLUE", "5 mm blue (InGaN) LED, Vf ~3.0 V at 10 mA", IS=2.79e-14, N=4.2,
           RS=6.0, CJO=20e-12, M=0.33, VJ=2.5, BV=5.0, IBV=10e-6),
    _diode("LED-WHITE", "5 mm white (InGaN and phosphor) LED, Vf ~3.1 V at 10 mA",
           IS=2.11e-14, N=4.3, RS=6.0, CJO=20e-12, M=0.33, VJ=2.5, BV=5.0, IBV=10e-6),
)


def _bjt(name: str, kind: str, note: str, hfe_scale: tuple[float, float],
         **params: float) -> DeviceModel:
    bf = params["BF"]
    return DeviceModel(name, kind, params, {"BF": (bf * hfe_scale[0], bf * hfe_scale[1])},
                       _MEMORY, note)


BJTS = (
    # hFE 100..300 at 10 mA against ~200 typical: BF scaled 0.5x..1.5x
    _bjt("2N3904", "npn", "general-purpose NPN, hFE 100-300", (0.5, 1.5), IS=6.734e-15,
         BF=416.4, NF=1.0, VAF=74.03, IKF=66.78e-3, ISE=6.734e-15, NE=1.259, BR=0.7371,
         NR=1.0, RB=10.0, RC=1.0, CJE=4.493e-12, MJE=0.2593, VJE=0.75, CJC=3.638e-12,
         MJC=0.3085, VJC=0.75, TF=301.2e-12, BVEBO=6.0),
    # hFE 300..900
    _bjt("2N5088", "npn", "high-gain low-noise NPN, hFE 300-900", (0.5, 1.5), IS=5.911e-15,
         BF=1122.0, VAF=62.37, IKF=14.92e-3, ISE=5.911e-15, NE=1.394, BR=1.271, RB=10.0,
         RC=1.61, CJE=4.973e-12, MJE=0.4146, CJC=4.017e-12, MJC=0.3174, TF=821.7e-12,
         BVEBO=3.0),
    # hFE 400..1200
    _bjt("2N5089", "npn", "high-gain low-noise NPN, hFE 400-1200", (0.5, 1.5), IS=5.911e-15,
         BF=1434.0, VAF=62.37, IKF=15.68e-3, ISE=5.911e-15, NE=1.421, BR=1.262, RB=10.0,
         RC=1.61, CJE=4.973e-12, MJE=0.4146, CJC=4.017e-12, MJC=0.3174, TF=822.3e-12,
         BVEBO=3.0),
    # hFE group C: 420..800
    _bjt("BC549C", "npn", "low-noise NPN, hFE group C 420-800", (0.7, 1.3), IS=1.8e-14,
         BF=600.0, VAF=60.0, IKF=0.1, ISE=5e-14, NE=1.5, BR=7.0, RB=10.0, RC=1.0,
         CJE=11.5e-12, MJE=0.33, CJC=4.5e-12, MJC=0.33, TF=410e-12, BVEBO=5.0),
    _bjt("2N3906", "pnp", "general-purpose PNP, hFE 100-300", (0.5, 1.5), IS=1.41e-15,
         BF=180.7, VAF=18.7, IKF=80e-3, ISE=0.0, NE=1.5, BR=4.977, RB=10.0, RC=2.5,
         CJE=8.063e-12, MJE=0.3677, CJC=9.728e-12, MJC=0.5776, TF=179.3e-12, BVEBO=5.0),
    # Germanium: VBE about 0.2 V at 1 mA (IS), hFE 60-175, a slow part (fT ~1.5 MHz: TF),
    # and the collector-base leakage ICBO of a few microamps that germanium is known for,
    # as the collector junction's leakage term ISC (NC 2, saturating within a few tenths of
    # a volt of reverse bias); biased from a base resistor it is multiplied by hFE, the
    # 100-300 uA "leakage" fuzz builders measure (common practice, no source)
    _bjt("AC128", "pnp", "germanium PNP with collector leakage, hFE 60-175", (0.65, 1.9),
         IS=4e-7, BF=90.0, VAF=30.0, IKF=0.5, ISE=1e-8, NE=2.0, ISC=2.5e-6, NC=2.0, BR=5.0,
         RB=100.0, RC=0.5, CJE=60e-12, VJE=0.3, MJE=0.4, CJC=30e-12, VJC=0.3, MJC=0.4,
         TF=100e-9, BVEBO=10.0),
)


def _jfet(name: str, kind: str, note: str, vto: tuple[float, float],
          idss: tuple[float, float], **params: float) -> DeviceModel:
    return DeviceModel(name, kind, params, {"VTO": vto, "IDSS": idss}, _MEMORY, note)


JFETS = (
    _jfet("J201", "njf", "low-cutoff N-JFET: VGS(off) -0.3..-1.5 V, IDSS 0.2..1 mA",
          (-1.5, -0.3), (0.2e-3, 1.0e-3), VTO=-0.8, BETA=0.9e-3, LAMBDA=4e-3, IS=1e-14,
          RD=1.0, RS=1.0, CGS=4e-12, CGD=1.6e-12, PB=0.6),
    _jfet("2N5457", "njf", "general-purpose N-JFET: VGS(off) -0.5..-6 V, IDSS 1..5 mA",
          (-6.0, -0.5), (1e-3, 5e-3), VTO=-1.372, BETA=1.125e-3, LAMBDA=2.3e-3,
          IS=181.3e-15, RD=1.0, RS=1.0, CGS=4.06e-12, CGD=4.06e-12, PB=0.5),
    # BETA = IDSS / VTO**2 at about 9 mA and -3 V
    _jfet("MPF102", "njf", "general-purpose N-JFET: VGS(off) -0.5..-8 V, IDSS 2..20 mA",
          (-8.0, -0.5), (2e-3, 20e-3), VTO=-3.0, BETA=1e-3, LAMBDA=0.02, IS=1e-14,
          RD=2.0, RS=2.0, CGS=4.5e-12, CGD=2e-12, PB=0.6),
    # SPICE writes a P-JFET's pinch-off in the device frame, negative like an N-JFET's.
    _jfet("2N5460", "pjf", "general-purpose P-JFET: VGS(off) +0.75..+6 V, IDSS 1..5 mA",
          (-6.0, -0.75), (1e-3, 5e-3), VTO=-1.8, BETA=0.8e-3, LAMBDA=6e-3, IS=1e-14,
          RD=1.0, RS=1.0, CGS=6e-12, CGD=6e-12, PB=0.6),
)

OPAMPS = (
    DeviceModel("TL072", "opamp", {
        "AOL": 2e5, "GBW": 3e6, "RIN": 1e12, "ROUT": 100.0, "SWING_HI": 1.5,
        "SWING_LO": 1.5, "CM_HI": 0.0, "CM_LO": 3.0, "IQ": 1.4e-3, "IB": 30e-12,
        "SR": 13e6, "ILIM": 40e-3,
    }, {}, _MEMORY, "dual JFET-input op-amp; input range excludes the negative rail"),
    DeviceModel("NE5532", "opamp", {
        "AOL": 1e5, "GBW": 10e6, "RIN": 300e3, "ROUT": 50.0, "SWING_HI": 1.5,
        "SWING_LO": 1.5, "CM_HI": 2.0, "CM_LO": 2.0, "IQ": 4e-3, "IB": 200e-9,
        "SR": 9e6, "ILIM": 38e-3,
    }, {}, _MEMORY, "dual low-noise bipolar op-amp; its NPN inputs draw their bias current in"),
    DeviceModel("LM358", "opamp", {
        "AOL": 1e5, "GBW": 1e6, "RIN": 2e6, "ROUT": 100.0, "SWING_HI": 1.5,
        "SWING_LO": 0.02, "CM_HI": 1.5, "CM_LO": 0.0, "IQ": 0.35e-3, "IB": -45e-9,
        "SR": 0.3e6, "ILIM": 20e-3,
    }, {}, _MEMORY, "dual single-supply op-amp; inputs and output reach the negative rail; "
       "its PNP inputs push their bias current out"),
    DeviceModel("RC4558", "opamp", {
        "AOL": 1e5, "GBW": 3e6, "RIN": 5e6, "ROUT": 75.0, "SWING_HI": 1.5,
        "SWING_LO": 1.5, "CM_HI": 2.0, "CM_LO": 2.0, "IQ": 1.25e-3, "IB": 40e-9,
        "SR": 1.7e6, "ILIM": 25e-3,
    }, {}, _MEMORY, "dual bipolar op-amp common in drive pedals; its NPN inputs draw their "
       "bias current in"),
)

PUMPS = (
    # The common 8-pin charge-pump converter of pedal power sections: about 45 ohms of switch
    # resistance (its datasheet's 55 ohms of output resistance includes the 10 uF flying
    # capacitor's 1 / (f C) at 10 kHz), a 10 kHz oscillator, about 100 uA of its own
    DeviceModel("7660", "pump", {"ROUT": 45.0, "FOSC": 10e3, "IQ": 100e-6}, {}, _MEMORY,
                "charge-pump voltage converter, 10 kHz; doubles or inverts its supply"),
)

LIBRARY: tuple[DeviceModel, ...] = DIODES + BJTS + JFETS + OPAMPS + PUMPS

for _model in LIBRARY:
    register_model(_model.name, _model)
# Short aliases the trade uses for the LEDs, and the generic type names of library parts.
ALIASES = {
    "LED red": "LED-RED", "LED green": "LED-GREEN", "LED yellow": "LED-YELLOW",
    "LED blue": "LED-BLUE", "LED white": "LED-WHITE", "1N34A": "GE-SIGNAL",
    "4558": "RC4558",
}
_BY_NAME = {m.name: m for m in LIBRARY}
for _alias, _name in ALIASES.items():
    register_model(_alias, _BY_NAME[_name])
