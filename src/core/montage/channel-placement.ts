/**
 * Where a recording's channels sit on the head: from its positions file when it names them,
 * else from the idealised 10-10 positions when the name is a 10-10 site, else nowhere. Positions
 * are stored as directions from the head centre on the unit sphere (x right, y front, z up: the
 * frame of the 10-10 template, positions.ts), so file and template positions are drawn and
 * joined the same way; a file's own coordinates (metres) are kept beside them.
 *
 * From a file: the centre is the least-squares sphere through all of the file's electrodes
 * (head-sphere.ts), or the coordinate origin when they do not fix one (with a note). A channel
 * matches a file electrode by its stored name (E17, C3) or its electrode (C3 of C3-M2), ignoring
 * case; a scalp pair (Pz-Oz) whose two electrodes are in the file sits halfway between them on
 * the sphere, as on the template.
 */
import type { ElectrodeLayout } from './electrodes-file.ts';
import { directionFrom, fitSphere, type Sphere } from './head-sphere.ts';
import { channelPosition, type Position3 } from './positions.ts';

export type PositionSource = 'file' | 'template' | 'none';

export interface ChannelPlacement {
  /** Direction from the head centre on the unit sphere; null when unknown. */
  position: Position3 | null;
  /** The file's coordinates in metres (x right, y front, z up, the file's origin); null unless from a file. */
  metres: Position3 | null;
  source: PositionSource;
}

/** A positions file ready to place channels: its electrodes by name, on the unit sphere and in metres. */
export interface HeadLayout {
  file: string;
  sphere: Sphere | null;
  byName: Map<string, { unit: Position3; metres: Position3 }>;
  notes: string[];
}

/** Plausible adult head radii, m (head circumference 50–60 cm gives 8–9.5 cm; common practice, wide margins). */
const HEAD_RADIUS_M: [number, number] = [0.05, 0.15];

export function headLayout(layout: ElectrodeLayout): HeadLayout {
  const notes = [...layout.notes];
  const sphere = fitSphere(layout.electrodes);
  if (!sphere)
    notes.push(
      `${layout.file}: the ${layout.electrodes.length} positions do not fix a head sphere (fewer than 4, or on one plane); directions are taken from the coordinate origin`,
    );
  else if (sphere.radius < HEAD_RADIUS_M[0] || sphere.radius > HEAD_RADIUS_M[1]) {
    notes.push(`${layout.file}: the fitted head radius is ${sphere.radius.toPrecision(3)} m with coordinates in ${layout.unit}; check the unit`);
  }
  const centre = sphere?.centre ?? { x: 0, y: 0, z: 0 };
  const byName = new Map<string, { unit: Position3; metres: Position3 }>();
  for (const e of layout.electrodes) {
    const unit = directionFrom(centre, e);
    if (unit) byName.set(e.name.trim().toUpperCase(), { unit, metres: { x: e.x, y: e.y, z: e.z } });
  }
  return { file: layout.file, sphere, byName, notes };
}

/** Mastoids and ear lobes: reference sites, not the far end of a scalp pair (as positions.ts isScalpSite). */
const REFERENCE_SITE = /^(M|A)[12]$/i;

function midpoint(a: Position3, b: Position3): Position3 | null {
  const m = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2, z: (a.z + b.z) / 2 };
  const r = Math.hypot(m.x, m.y, m.z);
  return r > 1e-9 ? { x: m.x / r, y: m.y / r, z: m.z / r } : null;
}

/**
 * The placement of one stored channel (`name`: C3, E17, Pz-Oz; `electrode`: the label's
 * electrode, C3 for C3-M2) from the recording's positions file, or the 10-10 template.
 */
export function placeChannel(name: string, electrode: string, head: HeadLayout | null): ChannelPlacement {
  if (head) {
    const whole = head.byName.get(name.trim().toUpperCase());
    if (whole) return { position: whole.unit, metres: whole.metres, source: 'file' };
    // a scalp pair before its first electrode; against a mastoid or ear lobe, at the electrode
    const pair = /^\s*([^-\s]+)\s*-\s*([^-\s]+)\s*$/.exec(name);
    const a = pair ? head.byName.get(pair[1].toUpperCase()) : undefined;
    const b = pair && !REFERENCE_SITE.test(pair[2]) ? head.byName.get(pair[2].toUpperCase()) : undefined;
    const mid = a && b ? midpoint(a.unit, b.unit) : null;
    if (a && b && mid)
      return {
        position: mid,
        metres: { x: (a.metres.x + b.metres.x) / 2, y: (a.metres.y + b.metres.y) / 2, z: (a.metres.z + b.metres.z) / 2 },
        source: 'file',
      };
    const hit = head.byName.get(electrode.trim().toUpperCase());
    if (hit) return { position: hit.unit, metres: hit.metres, source: 'file' };
  }
  const template = channelPosition(name);
  return template ? { position: template, metres: null, source: 'template' } : { position: null, metres: null, source: 'none' };
}
