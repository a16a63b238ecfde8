import { describe, expect, it } from "vitest";
import {
  coolantTempC,
  decodePid,
  engineLoadPercent,
  engineRpm,
  intakeAirTempC,
  throttlePercent,
  vehicleSpeedKmh,
} from "../../../shared/domain/obd";

describe("SAE J1979 service 01 PIDs", () => {
  it.each([
    [0x0f, 0xa0, 1000],
    [0x1a, 0xf8, 1726],
    [0xff, 0xff, 16383.75],
    [0x00, 0x00, 0],
  ])("PID 0C engine speed %d %d → %d rpm", (a, b, rpm) => {
    // Source: SAE J1979 as tabulated publicly (docs/trade-reference.md) — rpm = (256·A + B)/4.
    expect(engineRpm(a, b)).toBe(rpm);
    expect(decodePid(0x0c, [a, b])).toEqual({ pid: 0x0c, name: "Engine speed", unit: "rpm", value: rpm });
  });

  it.each([
    [0x00, -40],
    [0x7b, 83],
    [0xff, 215],
  ])("PID 05 coolant %d → %d °C", (a, t) => {
    // Source: SAE J1979 as tabulated publicly (docs/trade-reference.md) — A − 40 °C (FF → 215 follows from the formula).
    expect(coolantTempC(a)).toBe(t);
    expect(decodePid(0x05, [a]).value).toBe(t);
  });

  it("PID 0D speed, 11 throttle, 04 load, 0F intake air", () => {
    // From memory: SAE J1979 as tabulated publicly — 0D A km/h; 11 and 04 100·A/255 %; 0F A − 40 °C.
    expect(vehicleSpeedKmh(0x64)).toBe(100);
    expect(throttlePercent(0xff)).toBe(100);
    expect(throttlePercent(0)).toBe(0);
    expect(throttlePercent(0x80)).toBeCloseTo(50.196, 3);
    expect(engineLoadPercent(0xff)).toBe(100);
    expect(engineLoadPercent(0x33)).toBeCloseTo(20, 10);
    expect(intakeAirTempC(0x3c)).toBe(20);
    expect(decodePid(0x0d, [0x32]).unit).toBe("km/h");
    expect(decodePid(0x11, [0x33]).value).toBeCloseTo(20, 10);
  });

  it("refuses non-byte data, missing bytes and unsupported PIDs", () => {
    // SAE J1979: each data byte is 0–255.
    expect(() => engineRpm(256, 0)).toThrow(RangeError);
    expect(() => engineRpm(0, -1)).toThrow(RangeError);
    expect(() => coolantTempC(12.5)).toThrow(RangeError);
    expect(() => decodePid(0x0c, [0x0f])).toThrow(/needs 2/);
    expect(() => decodePid(0x99, [0])).toThrow(/not supported/);
  });
});
