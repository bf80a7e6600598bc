/** Search of the material list by a free-text term, shared by the API (`?q=`) and any CLI that wants it. */
import type { Registry } from '../registry/open.ts';
import type { MaterialRecord } from '../registry/types.ts';
import { listMaterials } from './materials.ts';

/**
 * Materials whose slug, name, description or a tag contains every whitespace-separated word of
 * `query` (case-insensitive), in slug order. An empty query lists all materials.
 */
export async function searchMaterials(registry: Registry, query: string): Promise<MaterialRecord[]> {
  const words = query.toLowerCase().split(/\s+/).filter(Boolean);
  return (await listMaterials(registry)).filter((m) => {
    const haystack = [m.slug, m.name, m.description, ...m.tags].join('\n').toLowerCase();
    return words.every((w) => haystack.includes(w));
  });
}
