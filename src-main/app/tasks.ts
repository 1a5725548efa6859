/**
 * Running tasks by id, so that `cancel` can reach the AbortController of a fit or a
 * back-test started by another request.
 */
export class TaskRegistry {
  private readonly running = new Map<string, AbortController>();

  /** Registers a task; a duplicate id is refused so one caller cannot hijack another's task. */
  start(taskId: string): AbortController | undefined {
    if (this.running.has(taskId)) return undefined;
    const ac = new AbortController();
    this.running.set(taskId, ac);
    return ac;
  }

  end(taskId: string): void {
    this.running.delete(taskId);
  }

  cancel(taskId: string): boolean {
    const ac = this.running.get(taskId);
    if (!ac) return false;
    ac.abort();
    return true;
  }

  cancelAll(): void {
    for (const ac of this.running.values()) ac.abort();
    this.running.clear();
  }

  get size(): number {
    return this.running.size;
  }
}
