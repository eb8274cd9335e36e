// React 19 warns that react-test-renderer is deprecated on every create(); it is still the
// renderer jest-expo supports, so drop that one line and keep every other error visible.
const original = console.error;
console.error = (...args: unknown[]) => {
  if (typeof args[0] === 'string' && args[0].includes('react-test-renderer is deprecated')) return;
  original(...args);
};
(globalThis as { IS_REACT_ACT_ENVIRONMENT?: boolean }).IS_REACT_ACT_ENVIRONMENT = true;
