import { z } from "zod";

/** How the scope was connected: the probe or pickup on the channel. */
export const probeKinds = ["capacitive-secondary", "direct", "x10", "current-clamp"] as const;
export const traceKinds = ["secondary-ignition", "relative-compression", "injector", "crank", "generic"] as const;
export type ProbeKind = (typeof probeKinds)[number];
export type TraceKind = (typeof traceKinds)[number];

/**
 * Capture settings as the technician had them on the scope. Volts/division and time/division
 * frame the "capture view" (10 horizontal, 8 vertical divisions); the rest helps the review.
 */
export const captureSettingsSchema = z
  .object({
    kind: z.enum(traceKinds).default("secondary-ignition"),
    probe: z.enum(probeKinds).default("capacitive-secondary"),
    /** capacitive pickup scale: kV at the plug per volt at the scope */
    kvPerVolt: z.number().positive().max(1000).optional(),
    /** current clamp scale: millivolts per ampere */
    mvPerAmp: z.number().positive().max(10000).optional(),
    voltsPerDiv: z.number().positive().max(10000),
    timePerDivS: z.number().positive().max(100),
    triggerSource: z.string().trim().max(40).default("A"),
    triggerLevel: z.number().min(-100000).max(100000).optional(),
    triggerMode: z.enum(["auto", "normal", "single"]).default("auto"),
    triggerSlope: z.enum(["rising", "falling"]).default("rising"),
    /** ground (0 V) position in divisions from the screen's centre, positive upwards */
    groundOffsetDiv: z.number().min(-4).max(4).default(0),
    coupling: z.enum(["dc", "ac"]).default("dc"),
    /** sample rate, required only when the file has no time column */
    sampleRateHz: z.number().positive().max(1e10).optional(),
    /** what the channel was connected to */
    cylinder: z.number().int().min(1).max(16).optional(),
    coil: z.number().int().min(1).max(16).optional(),
    circuit: z.string().trim().max(120).optional(),
    sensor: z.string().trim().max(120).optional(),
    /** four-stroke engines fire each cylinder once per 720°; a waste-spark coil fires every 360° */
    wasteSpark: z.boolean().default(false),
    /**
     * the pickup sees every cylinder's firing (on a distributor's coil wire): `cylinders` firings per
     * 720°, so rpm = 120/(period × cylinders); wasteSpark does not apply then
     */
    everyCylinder: z.boolean().default(false),
    cylinders: z.number().int().min(1).max(16).optional(),
  })
  .strict();

export type CaptureSettings = z.infer<typeof captureSettingsSchema>;
export type CaptureSettingsInput = z.input<typeof captureSettingsSchema>;

/** Screen geometry of the capture view. Common practice for bench scopes: 10 × 8 divisions. */
export const SCREEN_DIVISIONS_X = 10;
export const SCREEN_DIVISIONS_Y = 8;

/** The voltage range visible on the tech's screen, from volts/division and the ground offset. */
export function screenVoltageRange(s: Pick<CaptureSettings, "voltsPerDiv" | "groundOffsetDiv">): {
  min: number;
  max: number;
} {
  const half = SCREEN_DIVISIONS_Y / 2;
  const offset = s.groundOffsetDiv ?? 0;
  return { min: (-half - offset) * s.voltsPerDiv, max: (half - offset) * s.voltsPerDiv };
}
