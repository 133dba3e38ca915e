// The page's side of the worker protocol: {id, fn, args} → {id, ok, value | error},
// with args and value as JSON strings. Other worker messages go to the handlers.

export class EngineError extends Error {
  constructor(type, message) {
    super(message);
    this.type = type;
  }
}

export class EngineClient {
  constructor(workerURL, config, handlers) {
    this.pending = new Map();
    this.nextId = 1;
    this.handlers = handlers;
    this.worker = new Worker(workerURL, { type: "module" });
    this.worker.onmessage = (event) => this.receive(event.data);
    this.worker.onerror = (event) => {
      event.preventDefault();
      this.handlers.bootError(`the worker script failed: ${event.message || "could not load js/worker.js"}`);
    };
    this.worker.postMessage({ type: "init", config });
  }

  receive(msg) {
    if (msg.id !== undefined) {
      const waiter = this.pending.get(msg.id);
      if (!waiter) return;
      this.pending.delete(msg.id);
      if (msg.ok) waiter.resolve({ json: msg.value, value: JSON.parse(msg.value) });
      else waiter.reject(new EngineError(msg.error.type, msg.error.message));
      return;
    }
    const handler = { progress: "progress", ready: "ready", "boot-error": "bootError", scipy: "scipy" }[msg.type];
    if (handler) this.handlers[handler](msg.type === "boot-error" ? msg.message : msg);
  }

  // Resolves to {json, value}: the raw JSON string and its parsed form.
  call(fn, ...args) {
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      this.worker.postMessage({ id, fn, args: JSON.stringify(args) });
    });
  }

  // Tell the worker the first answer is on screen: it may now load the rest (scipy).
  loadBackground() {
    this.worker.postMessage({ type: "background" });
  }

  terminate() {
    this.worker.terminate();
    for (const waiter of this.pending.values()) {
      waiter.reject(new EngineError("BootError", "the worker was stopped"));
    }
    this.pending.clear();
  }
}
