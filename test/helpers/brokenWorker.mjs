// Worker-thread entry for the pool's tests: fails while loading, before it is ready.
throw new Error('this worker cannot load');
