/**
 * A rack file: the stations of a burn-in rack in one JSON file, so the rack starts from one
 * command (`taperline serve --rack rack.json`), and the file `serve` saves next to its
 * database to bring the same stations back after a restart.
 *
 *   { "stations": [
 *       { "id": "slot-1", "label": "garden sensor A", "port": "/dev/ttyUSB0", "profile": "garden.json" },
 *       { "id": "slot-2", "port": "tcp://192.168.1.40:4000", "baud": 115200, "profile": { "chemistry": "li-ion", "cells": 3 } },
 *       { "id": "demo", "simulate": "bench-liion-3s", "speedup": 60 } ] }
 *
 * `profile` is a file name (relative to the rack file) or the profile itself; absent or null
 * = assumed from the first pack voltage (a simulated station brings its scenario's profile).
 */
import { z } from 'zod';
import { simulatorSourceSchema } from './schemas';

export const rackStationIdSchema = z
  .string()
  .min(1)
  .max(64)
  .regex(/^[A-Za-z0-9._-]+$/, 'letters, digits, . _ - only');

export const rackStationSchema = z
  .object({
    id: rackStationIdSchema.optional(),
    label: z.string().max(120).optional(),
    /** A serial port path or `tcp://HOST:PORT`. */
    port: z.string().min(1).max(512).optional(),
    baud: z.number().int().min(50).max(4_000_000).optional(),
    /** A simulator scenario instead of a port. */
    simulate: simulatorSourceSchema.shape.scenario.optional(),
    speedup: simulatorSourceSchema.shape.speedup,
    profile: z
      .union([z.string().min(1), z.record(z.string(), z.unknown())])
      .nullable()
      .optional(),
  })
  .strict()
  .refine((s) => (s.port === undefined) !== (s.simulate === undefined), {
    message: 'give either "port" (a serial path or tcp://HOST:PORT) or "simulate" (a scenario), not both',
  })
  .refine((s) => s.speedup === undefined || s.simulate !== undefined, {
    message: '"speedup" goes with "simulate"',
    path: ['speedup'],
  });

export const rackFileSchema = z
  .object({
    stations: z.array(rackStationSchema).max(256),
  })
  .strict();

export type RackStation = z.infer<typeof rackStationSchema>;
export type RackFile = z.infer<typeof rackFileSchema>;
