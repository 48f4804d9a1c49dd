export default function ApiReference() {
  return null;
}
