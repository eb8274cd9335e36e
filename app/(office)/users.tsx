export { UsersScreen as default } from '../../components/features/users/users-screen';
