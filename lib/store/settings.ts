/** Small installation facts kept in the `setting` table. */
import type { Store } from "./db";

export async function getSetting<T>(store: Store, key: string): Promise<T | null> {
  const row = await store.prisma.setting.findUnique({ where: { key } });
  return row ? (row.value as T) : null;
}

export async function putSetting(store: Store, key: string, value: unknown): Promise<void> {
  await store.prisma.setting.upsert({ where: { key }, create: { key, value: value as object }, update: { value: value as object } });
}
