/** A tiny typed event hub for the renderer's model (views subscribe, the store emits). */
type Listener = (...args: unknown[]) => void;

export class Hub<Events extends Record<string, unknown[]>> {
  private readonly listeners = new Map<keyof Events, Set<Listener>>();

  on<K extends keyof Events>(name: K, cb: (...args: Events[K]) => void): () => void {
    let set = this.listeners.get(name);
    if (!set) {
      set = new Set();
      this.listeners.set(name, set);
    }
    const listener = cb as unknown as Listener;
    set.add(listener);
    return () => set!.delete(listener);
  }

  emit<K extends keyof Events>(name: K, ...args: Events[K]): void {
    for (const cb of this.listeners.get(name) ?? []) cb(...args);
  }
}
