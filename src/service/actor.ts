/** Who is acting: every registry write records a non-empty actor name. */
import { InputError } from '../errors.ts';

export const MAX_ACTOR_CHARS = 100;

export function checkActor(actor: string): string {
  const name = actor.trim();
  if (name === '' || name.length > MAX_ACTOR_CHARS || /[\u0000-\u001f]/.test(name)) {
    throw new InputError('actor-invalid', `"${actor}" is not a user name (1 to ${MAX_ACTOR_CHARS} printable characters)`);
  }
  return name;
}
