# charger.py - MicroPython: one Taperline telemetry line a second on the USB serial
# console, the same lines as the ChargerAvr sketch. Copy taperline_line.py and this file
# to the board (as main.py to start at power-up).
#
# Wiring as in the firmware README, on a 3.3 V board: pack voltage through a divider
# (here 47 k over 4.7 k: 11x, 36.3 V full scale for up to 8 Li-ion cells), a current-sense
# amplifier (gain 100 on 10 mOhm: 1 mV per mA, 3.3 A full scale), a 10 k NTC with a 10 k
# pull-up to the ADC reference, the charger's two open-drain status outputs on inputs
# with pull-ups. Pin numbers are this example's; change them for your board.
import sys
import time

from machine import ADC, Pin

import taperline_line as tl

BOARD_ID = "GS-0042"  # invented: set your own
FW_VERSION = "1.4.2"
VREF_MV = 3300  # measure the board's ADC reference and put it here
VBAT_FULL_SCALE_MV = VREF_MV * (47000 + 4700) // 4700
IBAT_FULL_SCALE_MA = VREF_MV * 1000 // (100 * 10)  # Vref / (gain x shunt)
STEPS = 65536  # read_u16() scales every port's ADC to 0..65535

adc_vbat = ADC(Pin(26))
adc_ibat = ADC(Pin(27))
adc_ntc = ADC(Pin(28))  # profile: "thermistor": {..., "pullupOhm": 10000, "adcMax": 65535}
pin_chg = Pin(14, Pin.IN, Pin.PULL_UP)  # low = charging
pin_flt = Pin(15, Pin.IN, Pin.PULL_UP)  # low = fault

line = tl.Line(tl.KV)  # or tl.CSV, tl.JSON
out = sys.stdout

out.write(line.board(BOARD_ID, FW_VERSION).decode())
start = time.ticks_ms()
due = start
while True:
    while time.ticks_diff(time.ticks_ms(), due) < 0:
        time.sleep_ms(5)
    due = time.ticks_add(due, 1000)
    now_ms = time.ticks_diff(time.ticks_ms(), start)
    line.begin()
    line.time_ms(now_ms)
    line.milli("vbat", tl.scale_counts(adc_vbat.read_u16(), VBAT_FULL_SCALE_MV, STEPS))
    line.milli("ibat", tl.scale_counts(adc_ibat.read_u16(), IBAT_FULL_SCALE_MA, STEPS))
    line.adc("ntc", adc_ntc.read_u16())
    line.flag("chg", pin_chg.value() == 0)
    line.flag("flt", pin_flt.value() == 0)
    data = line.end()
    if data is None:
        out.write("# line not sent, error %d\n" % line.error)
    else:
        out.write(data.decode())
