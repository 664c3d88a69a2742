"""The medium-scale chips' models against their published function tables (issue 20).

Each check is a row, or every row, of the function table printed in the
generic datasheets of the part (74HC283, '85, '138, '139, '151, '153, '161,
'163, '164, '595), as recalled (``from memory``), or the part's defining
arithmetic (``common practice``).  The models are the catalog's own
(libraries/74hc.xml), evaluated by :class:`mapper.catalog.blockdef.BlockDef`.
"""
from __future__ import annotations

import itertools

import pytest

from mapper import flow

H, L = 1, 0


@pytest.fixture(scope="module")
def cells():
    return flow.load_target("msi-74").cells


def _eval(cd, **ins) -> dict:
    """Every output of block ``cd`` for one row of input values (one bit each); a chip slot of one output
    (the '153's 4:1 multiplexer) is a plain cell with one truth table."""
    if cd.block is None:
        row = sum(ins.get(p, 0) << j for j, p in enumerate(cd.inputs))
        return {cd.output: (cd.logic_function().table() >> row) & 1}
    env = cd.block.evaluate({p: ins.get(p, 0) for p in cd.inputs}, 1, ins.get("state"))
    return {o: env[o] for o in cd.outputs if o in env}


def test_283_adds_every_pair_of_nibbles(cells):
    # common practice: S4..S1 and C4 are the 5-bit sum A + B + C0 (the '283 function table lists such sums)
    cd = cells["add4"]
    for a, b, c in itertools.product(range(16), range(16), range(2)):
        ins = {f"A{i + 1}": (a >> i) & 1 for i in range(4)} | {f"B{i + 1}": (b >> i) & 1 for i in range(4)}
        out = _eval(cd, C0=c, **ins)
        got = sum(out[f"S{i + 1}"] << i for i in range(4)) + (out["C4"] << 4)
        assert got == a + b + c


@pytest.mark.parametrize("a,b,cascade,want", [
    # from memory: the 74HC85 function table; cascade inputs (A>B, A<B, A=B) -> outputs (A>B, A<B, A=B)
    (0b1000, 0b0111, (L, H, L), (H, L, L)),     # A3 > B3 decides, whatever follows
    (0b0111, 0b1000, (H, L, L), (L, H, L)),     # A3 < B3
    (0b1101, 0b1110, (H, L, L), (L, H, L)),     # A3 = B3, A2 = B2, A1 < B1
    (0b0110, 0b0101, (L, H, L), (H, L, L)),     # decided at bit 1
    (0b0011, 0b0010, (L, L, H), (H, L, L)),     # decided at bit 0
    (0b1010, 0b1010, (H, L, L), (H, L, L)),     # words equal: the cascade inputs pass on
    (0b1010, 0b1010, (L, H, L), (L, H, L)),
    (0b1010, 0b1010, (L, L, H), (L, L, H)),
    (0b1010, 0b1010, (H, H, H), (L, L, H)),     # A=B cascade input high wins
    (0b1010, 0b1010, (H, H, L), (L, L, L)),
    (0b1010, 0b1010, (L, L, L), (H, H, L)),
])
def test_85_function_table(cells, a, b, cascade, want):
    cd = cells["cmp4"]
    ins = {f"A{i}": (a >> i) & 1 for i in range(4)} | {f"B{i}": (b >> i) & 1 for i in range(4)}
    out = _eval(cd, GT_I=cascade[0], LT_I=cascade[1], EQ_I=cascade[2], **ins)
    assert (out["GT_O"], out["LT_O"], out["EQ_O"]) == want


def test_138_function_table(cells):
    # from memory: 74HC138 -- E1 (active low), E2 (active low), E3 (active high); the selected output is low
    cd = cells["dec3"]
    for e1, e2, e3, a in itertools.product((L, H), (L, H), (L, H), range(8)):
        out = _eval(cd, E1_N=e1, E2_N=e2, E3=e3, A0=a & 1, A1=(a >> 1) & 1, A2=a >> 2)
        on = e1 == L and e2 == L and e3 == H
        assert [out[f"Y{k}_N"] for k in range(8)] == [L if on and k == a else H for k in range(8)]


def test_139_function_table(cells):
    # from memory: 74HC139 -- each half: E low enables, the selected output is low
    cd = cells["dec2"]
    for e, a in itertools.product((L, H), range(4)):
        out = _eval(cd, E_N=e, A0=a & 1, A1=a >> 1)
        assert [out[f"Y{k}_N"] for k in range(4)] == [L if e == L and k == a else H for k in range(4)]


def test_151_function_table(cells):
    # from memory: 74HC151 -- E high: Y low, Y inverted high; else Y is the data input chosen by S2 S1 S0
    cd = cells["mux8"]
    for data in (0b10110010, 0b01001101, 0xFF, 0):
        for e, s in itertools.product((L, H), range(8)):
            ins = {f"I{k}": (data >> k) & 1 for k in range(8)}
            out = _eval(cd, E_N=e, S0=s & 1, S1=(s >> 1) & 1, S2=s >> 2, **ins)
            y = L if e == H else (data >> s) & 1
            assert (out["Y"], out["Y_N"]) == (y, 1 - y)


def test_153_function_table(cells):
    # from memory: 74HC153 -- each half: E high gives Y low; else Y is the input chosen by S1 S0
    cd = cells["mux4"]
    for data, e, s in itertools.product(range(16), (L, H), range(4)):
        ins = {f"I{k}": (data >> k) & 1 for k in range(4)}
        out = _eval(cd, E_N=e, S0=s & 1, S1=s >> 1, **ins)
        assert out["Y"] == (L if e == H else (data >> s) & 1)


def _count_step(cd, q: int, **ins) -> int:
    state = {r: (q >> i) & 1 for i, r in enumerate(("QA", "QB", "QC", "QD"))}
    values = {p: ins.get(p, 0) for p in cd.inputs}
    nxt = cd.block.next_state(values, 1, state)
    return sum(nxt[r] << i for i, r in enumerate(("QA", "QB", "QC", "QD")))


@pytest.mark.parametrize("cell", ["count4", "count4s"])
def test_161_163_count_load_hold(cells, cell):
    # from memory: 74HC161/'163 function table -- LOAD low loads A-D at the clock edge; ENP and ENT high
    # count up (15 wraps to 0); either low holds; RCO = ENT and a count of 15
    cd = cells[cell]
    run = {"CLR_N": H, "LOAD_N": H, "ENP": H, "ENT": H}
    for q in range(16):
        assert _count_step(cd, q, **run) == (q + 1) % 16
        assert _count_step(cd, q, **(run | {"ENP": L})) == q
        assert _count_step(cd, q, **(run | {"ENT": L})) == q
        load = run | {"LOAD_N": L, "A": 1, "B": 0, "C": 1, "D": 1, "ENP": L}
        assert _count_step(cd, q, **load) == 0b1101
        state = {r: (q >> i) & 1 for i, r in enumerate(("QA", "QB", "QC", "QD"))}
        for ent in (L, H):
            out = _eval(cd, **(run | {"ENT": ent, "state": state}))
            assert out["RCO"] == (1 if ent == H and q == 15 else 0)


def test_161_clears_at_once_163_at_the_clock(cells):
    # from memory: the '161 clear is asynchronous (no clock needed), the '163 clear acts at the clock edge
    asyn, syn = cells["count4"].block, cells["count4s"].block
    assert all(r.clear == "CLR_N" for r in asyn.registers) and "CLR_N" in cells["count4"].active_low
    assert all(r.clear is None for r in syn.registers)
    for q in range(16):
        assert _count_step(cells["count4s"], q, CLR_N=L, LOAD_N=H, ENP=H, ENT=H) == 0


def test_164_shifts_a_and_b(cells):
    # from memory: 74HC164 -- at each rising clock QA takes A AND B, QB..QH take the stage before
    cd = cells["shift8"]
    names = [f"Q{c}" for c in "ABCDEFGH"]
    q = 0b10110011
    for a, b in itertools.product((L, H), (L, H)):
        state = {n: (q >> i) & 1 for i, n in enumerate(names)}
        nxt = cd.block.next_state({"A": a, "B": b, "CLK": 0, "CLR_N": 1}, 1, state)
        assert sum(nxt[n] << i for i, n in enumerate(names)) == ((q << 1) & 0xFF) | (a & b)


def test_595_shift_then_store(cells):
    # from memory: 74HC595 -- SRCLK shifts SER into the shift register, RCLK copies it to the outputs,
    # QH' is the last shift stage whatever RCLK does
    cd = cells["shift8o"]
    sreg = [f"S{c}" for c in "ABCDEFGH"]
    oreg = [f"Q{c}" for c in "ABCDEFGH"]
    state = {n: 0 for n in sreg + oreg}
    word = 0b11010010
    for k in range(8):  # SER bits, the last one first into QH
        nxt = cd.block.next_state({"SER": (word >> (7 - k)) & 1, "SRCLK": 0, "RCLK": 0, "SRCLR_N": 1}, 1, state)
        state = {**state, **{n: nxt[n] for n in sreg}}   # only the shift clock ticked
    assert sum(state[n] << i for i, n in enumerate(sreg)) == word
    assert all(state[n] == 0 for n in oreg)
    assert _eval(cd, SRCLR_N=1, state=state)["QH_S"] == word >> 7
    nxt = cd.block.next_state({"SER": 0, "SRCLK": 0, "RCLK": 0, "SRCLR_N": 1}, 1, state)
    assert sum(nxt[n] << i for i, n in enumerate(oreg)) == word


@pytest.mark.parametrize("cell,kind,clear", [("dff_r", "re", "CLR_N"), ("dff_rq", "re", "CLR_N"),
                                             ("latch_q", "ah", None)])
def test_register_chips(cells, cell, kind, clear):
    # from memory: '273/'174 and '175 are rising-edge D flip-flops with an active-low master reset; the
    # '373/'573 latches are transparent while LE is high
    cd = cells[cell]
    assert cd.storage == kind and cd.block is None
    if clear:
        assert cd.roles[clear] == "clear" and clear in cd.active_low


#: package pins of the medium-scale parts, pin 1 upward (from memory of generic 74HC datasheets, typed here
#: independently of the catalog; VCC and GND at the corners; a flip-flop or latch of a multi-section part
#: named with its section number first, 1D and 1Q, as the house names section pins)
PINOUTS = {
    "74HC283": "S2 B2 A2 S1 A1 B1 C0 GND C4 S4 B4 A4 S3 A3 B3 VCC",
    "74HC85": "B3 LT_I EQ_I GT_I GT_O EQ_O LT_O GND B0 A0 B1 A1 A2 B2 A3 VCC",
    "74HC138": "A0 A1 A2 E1_N E2_N E3 Y7_N GND Y6_N Y5_N Y4_N Y3_N Y2_N Y1_N Y0_N VCC",
    "74HC151": "I3 I2 I1 I0 Y Y_N E_N GND S2 S1 S0 I7 I6 I5 I4 VCC",
    "74HC161": "CLR_N CLK A B C D ENP GND LOAD_N ENT QD QC QB QA RCO VCC",
    "74HC163": "CLR_N CLK A B C D ENP GND LOAD_N ENT QD QC QB QA RCO VCC",
    "74HC164": "A B QA QB QC QD GND CLK CLR_N QE QF QG QH VCC",
    "74HC595": "QB QC QD QE QF QG QH GND QH_S SRCLR_N SRCLK RCLK OE_N SER QA VCC",
    "74HC174": "CLR_N 1Q 1D 2D 2Q 3D 3Q GND CLK 4Q 4D 5Q 5D 6D 6Q VCC",
    "74HC273": "CLR_N 1Q 1D 2D 2Q 3Q 3D 4D 4Q GND CLK 5Q 5D 6D 6Q 7Q 7D 8D 8Q VCC",
    "74HC373": "OE_N 1Q 1D 2D 2Q 3Q 3D 4D 4Q GND LE 5Q 5D 6D 6Q 7Q 7D 8D 8Q VCC",
    "74HC573": "OE_N 1D 2D 3D 4D 5D 6D 7D 8D GND LE 8Q 7Q 6Q 5Q 4Q 3Q 2Q 1Q VCC",
}


@pytest.mark.parametrize("part", sorted(PINOUTS))
def test_block_part_pinouts(part):
    # the catalog's pin numbers of the medium-scale parts against the table above
    pd = flow.load_target("msi-74").parts[part]
    names = pd.pin_names()
    assert [names[k] for k in range(1, len(names) + 1)] == PINOUTS[part].split()
