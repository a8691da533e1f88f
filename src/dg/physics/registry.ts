import type { PhysicsDefinition, PhysicsName } from './types.js';
import { advection } from './advection.js';
import { advectionDiffusion } from './advection-diffusion.js';
import { acoustics } from './acoustics.js';
import { burgers } from './burgers.js';
import { euler } from './euler.js';

/** Every physics by its command-line / suite-file name. Adding a physics: one file + one line here. */
const DEFINITIONS: readonly PhysicsDefinition[] = [
  advection,
  advectionDiffusion,
  acoustics,
  burgers,
  euler,
];

export const PHYSICS: ReadonlyMap<PhysicsName, PhysicsDefinition> = (() => {
  const map = new Map<PhysicsName, PhysicsDefinition>();
  for (const def of DEFINITIONS) {
    if (map.has(def.name)) throw new Error(`physics registry: duplicate name '${def.name}'`);
    map.set(def.name, def);
  }
  return map;
})();

export const PHYSICS_NAMES: readonly PhysicsName[] = DEFINITIONS.map((d) => d.name);

export function physicsDefinition(name: string): PhysicsDefinition | undefined {
  return PHYSICS.get(name as PhysicsName);
}
