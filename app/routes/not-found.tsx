import { data } from "react-router";

export async function loader() {
  throw data({ message: "There is nothing at this address, or you do not have access to it." }, { status: 404 });
}

export async function action() {
  throw data({ message: "There is nothing at this address." }, { status: 404 });
}

export default function NotFound() {
  return null;
}
