import { LEARNING_PLACEHOLDER } from '#learning';
console.log(LEARNING_PLACEHOLDER);
