// The page's side of the worker protocol: {id, fn, args} → {id, ok, value | error},
// with args and value as JSON strings. Other worker messages go to the handlers.

// An error answered by the engine: type (ScenarioError for bad input), message (the JSON-path
// form, as the CLI prints it), path (the field's JSON path) and plain (the message for a form,
// naming the field by its label).
export class EngineError extends Error {
  constructor(type, message, path = null, plain = null) {
    super(message);
    this.type = type;
    this.path = path;
    this.plain = plain;
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
      else waiter.reject(new EngineError(msg.error.type, msg.error.message, msg.error.path ?? null, msg.error.plain ?? null));
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
